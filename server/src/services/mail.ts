/**
 * Outgoing e-mail: nodemailer over SMTP.
 *
 * With SMTP_URL set (production), nodemailer talks to that relay and nothing else starts.
 * Without it (development, demo, tests) a fake SMTP server (./fake-mailbox.ts, the `smtp-server`
 * package, imported only then) listens on 127.0.0.1:FAKE_SMTP_PORT (0 = a free port), keeps every
 * message it receives in memory and the development mailbox (routes/dev.ts) lists them. The fake
 * stops on ctx.onClose.
 *
 *   getMailService(ctx): Promise<MailService>   (idempotent; also ctx.services.mail once started)
 *   mail.send({ to, subject, text, html })       (resolves once the SMTP server accepted it)
 *   mail.mailbox?.messages                       (the fake's kept messages, oldest first)
 *   verificationMail / resetPasswordMail / invitationMail  (the texts we send)
 */
import { escapeMarkup as escapeHtml } from '@nadirline/shared';
import { createTransport, type Transporter } from 'nodemailer';
import { devFakesRefused } from '../config.ts';
import type { AppContext } from '../context.ts';
import type { FakeMailbox } from './fake-mailbox.ts';

export type { KeptMessage } from './fake-mailbox.ts';
export { extractLinks, parseMessage, type ParsedMessage } from './mime.ts';

declare module '../context.ts' {
  interface AppServices {
    /** Set by getMailService (routes/api and routes/dev call it at start-up). */
    mail?: MailService;
  }
}

export interface OutgoingMail {
  to: string;
  subject: string;
  text: string;
  html: string;
}

export interface MailService {
  send(mail: OutgoingMail): Promise<void>;
  /** Present only when the fake SMTP server runs (SMTP_URL unset). */
  mailbox: FakeMailbox | null;
}

/** Starts the mail service once per app (fake SMTP server included) and registers its cleanup. */
export async function getMailService(ctx: AppContext): Promise<MailService> {
  if (ctx.services.mail) return ctx.services.mail;
  const { config, logger } = ctx;
  let transport: Transporter;
  let mailbox: FakeMailbox | null = null;
  if (config.SMTP_URL) {
    transport = createTransport(config.SMTP_URL);
  } else {
    const refused = devFakesRefused(config);
    if (refused) throw new Error(`The fake SMTP server does not run here: ${refused}. Set SMTP_URL to a real relay.`);
    // Loaded only here: with SMTP_URL set, the fake SMTP server's code is never read.
    const { FakeMailbox } = await import('./fake-mailbox.ts');
    mailbox = new FakeMailbox();
    const port = await mailbox.start(config.FAKE_SMTP_PORT);
    logger.info({ port }, 'fake SMTP server listening; messages at /dev/mailbox');
    transport = createTransport({ host: '127.0.0.1', port, secure: false, ignoreTLS: true });
    const box = mailbox;
    ctx.onClose(() => box.stop());
  }
  ctx.onClose(() => transport.close());
  const service: MailService = {
    mailbox,
    async send(mail) {
      await transport.sendMail({ from: config.MAIL_FROM, to: mail.to, subject: mail.subject, text: mail.text, html: mail.html });
    },
  };
  ctx.services.mail = service;
  return service;
}

// ---------------------------------------------------------------------------------------------
// The messages we send. Plain words, one link each, the link also written out in full.


function layout(lines: string[], link: string, linkLabel: string, footer: string): { text: string; html: string } {
  const text = [...lines, '', `${linkLabel}:`, link, '', footer, '', '-- Nadirline'].join('\n');
  const html = [
    '<!doctype html><html><body style="font-family: sans-serif; line-height: 1.5">',
    ...lines.map((l) => `<p>${escapeHtml(l)}</p>`),
    `<p><a href="${escapeHtml(link)}">${escapeHtml(linkLabel)}</a></p>`,
    `<p style="font-size: 90%">${escapeHtml(link)}</p>`,
    `<p style="font-size: 90%; color: #555">${escapeHtml(footer)}</p>`,
    '<p>Nadirline</p></body></html>',
  ].join('\n');
  return { text, html };
}

export function verificationMail(to: string, name: string, link: string): OutgoingMail {
  return {
    to,
    subject: 'Confirm your e-mail address for Nadirline',
    ...layout(
      [`Hello ${name},`, 'Please confirm that this address is yours so you can sign in to Nadirline.'],
      link,
      'Confirm my address',
      'The link works once and for 48 hours. If you did not sign up, ignore this message.',
    ),
  };
}

export function resetPasswordMail(to: string, name: string, link: string): OutgoingMail {
  return {
    to,
    subject: 'Choose a new Nadirline password',
    ...layout(
      [`Hello ${name},`, 'Someone (we hope you) asked to reset the password of your Nadirline account.'],
      link,
      'Choose a new password',
      'The link works once and for 1 hour. If you did not ask for it, ignore this message: your password stays as it is.',
    ),
  };
}

/** To the owner of an address someone tried to sign up with again (the sign-up answer does not say it exists). */
export function accountExistsMail(to: string, name: string, signInLink: string, resetLink: string): OutgoingMail {
  return {
    to,
    subject: 'Someone tried to make a new Nadirline account with your address',
    ...layout(
      [`Hello ${name},`, 'Someone (perhaps you) tried to sign up for Nadirline with this e-mail address, which already has an account. No new account was made and nothing changed in yours.', `If you have forgotten your password, choose a new one here: ${resetLink}`],
      signInLink,
      'Sign in',
      'If it was not you, you can ignore this message.',
    ),
  };
}

export function invitationMail(to: string, inviterName: string, organizationName: string, role: string, link: string): OutgoingMail {
  return {
    to,
    subject: `${inviterName} invited you to ${organizationName} on Nadirline`,
    ...layout(
      [`${inviterName} invited you to join ${organizationName} on Nadirline as ${/^[aeiou]/i.test(role) ? 'an' : 'a'} ${role}.`],
      link,
      'Accept the invitation',
      'The invitation works for 7 days. If you do not know the sender, ignore this message.',
    ),
  };
}

