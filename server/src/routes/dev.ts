/**
 * Development-only routes (absent in production): the mailbox of the built-in fake SMTP server.
 *   GET /dev/mailbox       an HTML page listing every kept message, newest first
 *   GET /dev/mailbox.json  { messages: [{ id, to, from, subject, text, html, links, receivedAt }] } oldest first
 *   DELETE /dev/mailbox    empties the mailbox (204), handy between manual tries
 * app.ts mounts it at /dev only when NODE_ENV is not production, and it answers only clients on
 * this machine (loopback addresses): the mailbox holds password-reset and invitation links.
 */
import { escapeMarkup as esc } from '@nadirline/shared';
import { Router } from 'express';
import type { AppContext } from '../context.ts';
import { HttpError } from '../http/problem.ts';
import { securityHeaders } from '../http/security.ts';
import { settleAfterResponse } from '../services/after-response.ts';
import { getMailService, type KeptMessage } from '../services/mail.ts';
import { PAGE_CSS } from './page-style.ts';


function page(messages: KeptMessage[]): string {
  const items = [...messages]
    .reverse()
    .map(
      (m) => `<article>
  <h2>${esc(m.subject || '(no subject)')}</h2>
  <p class="meta">To ${esc(m.to)} · from ${esc(m.from)} · <time datetime="${esc(m.receivedAt)}">${esc(m.receivedAt)}</time> · #${m.id}</p>
  ${m.links.length ? `<ul class="links">${m.links.map((l) => `<li><a href="${esc(l)}">${esc(l)}</a></li>`).join('')}</ul>` : ''}
  <pre>${esc(m.text || m.html)}</pre>
</article>`,
    )
    .join('\n');
  return `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>Development mailbox · Nadirline</title>
<meta name="color-scheme" content="light dark">
<style>${PAGE_CSS}
  main { max-width: 52rem; }
  article { border-top: 1px solid var(--rule); padding: 1rem 0; }
  article h2 { font-size: 1.1rem; margin: 0 0 .25rem; padding: 0; border: 0; }
  .meta { color: var(--muted); font-size: .9rem; margin: 0 0 .5rem; }
  pre { white-space: pre-wrap; overflow-wrap: anywhere; }
  .links a { word-break: break-all; }
</style>
</head>
<body><main>
<h1>Development mailbox</h1>
<p>Every e-mail this Nadirline server sent since it started (${messages.length}). Nothing left this machine. Newest first. JSON: <a href="/dev/mailbox.json">/dev/mailbox.json</a>.</p>
${items || '<p>No messages yet.</p>'}
</main></body>
</html>`;
}

/** 127.0.0.0/8, ::1 and their IPv4-mapped form. */
export function isLoopback(address: string | undefined): boolean {
  if (!address) return false;
  const a = address.startsWith('::ffff:') ? address.slice(7) : address;
  return a === '::1' || /^127\.\d{1,3}\.\d{1,3}\.\d{1,3}$/.test(a);
}

export async function createDevRouter(ctx: AppContext): Promise<Router> {
  const router = Router();
  router.use((req, _res, next) => {
    // req.ip: the client as the proxy settings see it; a remote client behind a local proxy is remote.
    if (!isLoopback(req.ip) || !isLoopback(req.socket.remoteAddress)) {
      throw new HttpError('not-found', 'The development mailbox is shown only on the machine the server runs on.');
    }
    next();
  });
  // Mail sent after an answer (reset, verification) is in the mailbox before it is shown.
  router.use(async (_req, _res, next) => {
    await settleAfterResponse(ctx);
    next();
  });
  const mail = await getMailService(ctx);
  const mailbox = () => {
    if (!mail.mailbox) throw new HttpError('not-found', 'The development mailbox exists only when SMTP_URL is unset.');
    return mail.mailbox;
  };
  router.get('/mailbox.json', (_req, res) => {
    res.set('Cache-Control', 'no-store').json({ messages: mailbox().messages });
  });
  router.get('/mailbox', securityHeaders(ctx.config, 'console'), (_req, res) => {
    res.set('Cache-Control', 'no-store').type('html').send(page(mailbox().messages));
  });
  router.delete('/mailbox', (_req, res) => {
    mailbox().messages.splice(0);
    res.status(204).end();
  });
  return router;
}
