/**
 * Outgoing e-mail: nodemailer over SMTP.
 *
 * With SMTP_URL set (production), nodemailer talks to that relay and nothing else starts.
 * Without it (development, demo, tests) a fake SMTP server (the `smtp-server` package) listens
 * on 127.0.0.1:FAKE_SMTP_PORT (0 = a free port), keeps every message it receives in memory and
 * the development mailbox (routes/dev.ts) lists them. The fake stops on ctx.onClose.
 *
 *   getMailService(ctx): Promise<MailService>   (idempotent; also ctx.services.mail once started)
 *   mail.send({ to, subject, text, html })       (resolves once the SMTP server accepted it)
 *   mail.mailbox?.messages                       (the fake's kept messages, oldest first)
 *   verificationMail / resetPasswordMail / invitationMail  (the texts we send)
 */
import { createTransport, type Transporter } from 'nodemailer';
import { SMTPServer } from 'smtp-server';
import { devFakesRefused } from '../config.ts';
import type { AppContext } from '../context.ts';

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

export interface KeptMessage {
  id: number;
  /** Recipients from the SMTP envelope, joined with ", ". */
  to: string;
  from: string;
  subject: string;
  text: string;
  html: string;
  /** Every http(s) link found in the text part (or the html part when there is no text). */
  links: string[];
  receivedAt: string;
}

export interface MailService {
  send(mail: OutgoingMail): Promise<void>;
  /** Present only when the fake SMTP server runs (SMTP_URL unset). */
  mailbox: FakeMailbox | null;
}

/** At most this many messages are kept by the fake; older ones are dropped. */
const MAILBOX_LIMIT = 500;

export class FakeMailbox {
  readonly messages: KeptMessage[] = [];
  private nextId = 1;
  private server: SMTPServer | null = null;
  port = 0;

  async start(port: number): Promise<number> {
    const server = new SMTPServer({
      // Local only, no login, no TLS: nothing leaves this process.
      authOptional: true,
      disabledCommands: ['AUTH', 'STARTTLS'],
      logger: false,
      banner: 'Nadirline development mailbox',
      size: 2 * 1024 * 1024,
      closeTimeout: 100,
      onData: (stream, session, callback) => {
        const chunks: Buffer[] = [];
        stream.on('data', (c: Buffer) => chunks.push(c));
        stream.on('end', () => {
          try {
            const raw = Buffer.concat(chunks).toString('latin1');
            const to = session.envelope.rcptTo.map((a) => a.address).join(', ');
            const from = session.envelope.mailFrom ? session.envelope.mailFrom.address : '';
            this.keep(raw, to, from);
            callback();
          } catch (err) {
            callback(err as Error);
          }
        });
      },
    });
    this.server = server;
    await new Promise<void>((resolve, reject) => {
      server.on('error', reject);
      server.listen(port, '127.0.0.1', () => resolve());
    });
    const address = server.server.address();
    this.port = typeof address === 'object' && address ? address.port : port;
    return this.port;
  }

  keep(raw: string, to: string, from: string): KeptMessage {
    const parsed = parseMessage(raw);
    const message: KeptMessage = {
      id: this.nextId++,
      to: to || parsed.to,
      from,
      subject: parsed.subject,
      text: parsed.text,
      html: parsed.html,
      links: extractLinks(parsed.text || parsed.html),
      receivedAt: new Date().toISOString(),
    };
    this.messages.push(message);
    if (this.messages.length > MAILBOX_LIMIT) this.messages.splice(0, this.messages.length - MAILBOX_LIMIT);
    return message;
  }

  async stop(): Promise<void> {
    const server = this.server;
    this.server = null;
    if (!server) return;
    await new Promise<void>((resolve) => server.close(() => resolve()));
  }
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

function escapeHtml(s: string): string {
  return s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c] ?? c);
}

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

// ---------------------------------------------------------------------------------------------
// Minimal MIME reading for the fake mailbox: headers, multipart, quoted-printable, base64,
// RFC 2047 encoded words. Enough for what nodemailer sends; not a general parser.

export interface ParsedMessage {
  to: string;
  subject: string;
  text: string;
  html: string;
}

interface Part {
  headers: Map<string, string>;
  body: string;
}

function splitPart(raw: string): Part {
  const normal = raw.replace(/\r\n/g, '\n');
  const end = normal.indexOf('\n\n');
  const head = end === -1 ? normal : normal.slice(0, end);
  const body = end === -1 ? '' : normal.slice(end + 2);
  const headers = new Map<string, string>();
  let last = '';
  for (const line of head.split('\n')) {
    if (/^[ \t]/.test(line) && last) {
      headers.set(last, `${headers.get(last) ?? ''} ${line.trim()}`);
      continue;
    }
    const colon = line.indexOf(':');
    if (colon <= 0) continue;
    last = line.slice(0, colon).trim().toLowerCase();
    headers.set(last, line.slice(colon + 1).trim());
  }
  return { headers, body };
}

function headerParam(value: string, name: string): string | undefined {
  const m = new RegExp(`;\\s*${name}\\s*=\\s*(?:"([^"]*)"|([^;\\s]*))`, 'i').exec(value);
  return m ? (m[1] ?? m[2]) : undefined;
}

function decodeBytes(latin1: string, charset: string): string {
  const bytes = Buffer.from(latin1, 'latin1');
  try {
    return new TextDecoder(charset || 'utf-8').decode(bytes);
  } catch {
    return bytes.toString('utf8');
  }
}

export function decodeQuotedPrintable(s: string): string {
  // Result is a latin1 byte string; the caller decodes it with the part's charset.
  return s.replace(/=\r?\n/g, '').replace(/=([0-9A-Fa-f]{2})/g, (_m, hex: string) => String.fromCharCode(parseInt(hex, 16)));
}

function decodeBody(part: Part): string {
  const cte = (part.headers.get('content-transfer-encoding') ?? '7bit').toLowerCase();
  const charset = headerParam(part.headers.get('content-type') ?? '', 'charset') ?? 'utf-8';
  let bytes = part.body;
  if (cte === 'base64') bytes = Buffer.from(part.body.replace(/\s+/g, ''), 'base64').toString('latin1');
  else if (cte === 'quoted-printable') bytes = decodeQuotedPrintable(part.body);
  return decodeBytes(bytes, charset).replace(/\r\n/g, '\n');
}

export function decodeEncodedWords(value: string): string {
  return value
    .replace(/(=\?[^?]+\?[BbQq]\?[^?]*\?=)\s+(?==\?)/g, '$1')
    .replace(/=\?([^?]+)\?([BbQq])\?([^?]*)\?=/g, (_m, charset: string, enc: string, data: string) => {
      const bytes =
        enc.toUpperCase() === 'B'
          ? Buffer.from(data, 'base64').toString('latin1')
          : data.replace(/_/g, ' ').replace(/=([0-9A-Fa-f]{2})/g, (_x, hex: string) => String.fromCharCode(parseInt(hex, 16)));
      return decodeBytes(bytes, charset.split('*')[0] ?? 'utf-8');
    });
}

function walk(part: Part, out: { text: string; html: string }): void {
  const type = part.headers.get('content-type') ?? 'text/plain';
  const mime = (type.split(';')[0] ?? '').trim().toLowerCase();
  if (mime.startsWith('multipart/')) {
    const boundary = headerParam(type, 'boundary');
    if (!boundary) return;
    const pieces = part.body.split(`--${boundary}`);
    // pieces[0] is the preamble; the piece after the closing boundary starts with "--".
    for (const piece of pieces.slice(1)) {
      if (piece.startsWith('--')) break;
      walk(splitPart(piece.replace(/^\r?\n/, '')), out);
    }
    return;
  }
  if ((part.headers.get('content-disposition') ?? '').toLowerCase().startsWith('attachment')) return;
  if (mime === 'text/plain' && !out.text) out.text = decodeBody(part).replace(/\n$/, '');
  else if (mime === 'text/html' && !out.html) out.html = decodeBody(part).replace(/\n$/, '');
}

export function parseMessage(raw: string): ParsedMessage {
  const top = splitPart(raw);
  const out = { text: '', html: '' };
  walk(top, out);
  return {
    to: decodeEncodedWords(top.headers.get('to') ?? ''),
    subject: decodeEncodedWords(top.headers.get('subject') ?? ''),
    text: out.text,
    html: out.html,
  };
}

export function extractLinks(body: string): string[] {
  const found = body.match(/https?:\/\/[^\s<>"')]+/g) ?? [];
  return [...new Set(found.map((l) => l.replace(/[.,;:]+$/, '').replace(/&amp;/g, '&')))];
}
