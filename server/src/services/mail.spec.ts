import pino from 'pino';
import type { Sequelize } from 'sequelize';
import { afterEach, describe, expect, it } from 'vitest';
import { loadConfig } from '../config.ts';
import type { AppContext } from '../context.ts';
import { extractLinks, getMailService, invitationMail, parseMessage } from './mail.ts';

const closers: Array<() => Promise<void> | void> = [];
afterEach(async () => {
  for (const fn of closers.splice(0).reverse()) await fn();
});

function fakeContext(env: Record<string, string> = {}): AppContext {
  return {
    config: loadConfig({ NODE_ENV: 'test', ...env }),
    sequelize: {} as Sequelize,
    logger: pino({ level: 'silent' }),
    onClose: (fn) => closers.push(fn),
    services: {},
  };
}

describe('mail service with the built-in fake SMTP server', () => {
  it('keeps a message sent through nodemailer with its recipient, subject, both bodies and links', async () => {
    const ctx = fakeContext();
    const mail = await getMailService(ctx);
    expect(mail.mailbox).not.toBeNull();
    const link = 'http://localhost:8080/invite/abcDEF123_-xyz';
    await mail.send(invitationMail('ada@example.test', 'Zoë Tran', 'Mirador Science Centre', 'editor', link));
    const [m] = mail.mailbox!.messages;
    expect(m).toBeDefined();
    expect(m!.to).toBe('ada@example.test');
    expect(m!.subject).toBe('Zoë Tran invited you to Mirador Science Centre on Nadirline');
    expect(m!.text).toContain('Zoë Tran invited you to join Mirador Science Centre on Nadirline as an editor.');
    expect(m!.html).toContain(`<a href="${link}">`);
    expect(m!.links).toEqual([link]);
  });

  it('decodes a long quoted-printable line with non-ASCII letters', async () => {
    const ctx = fakeContext();
    const mail = await getMailService(ctx);
    const long = `Ångström ${'x'.repeat(200)} end`;
    await mail.send({ to: 'b@example.test', subject: 'Plain subject', text: long, html: `<p>${long}</p>` });
    const m = mail.mailbox!.messages.at(-1)!;
    expect(m.text).toBe(long);
    expect(m.html).toBe(`<p>${long}</p>`);
  });

  it('returns the same service when asked twice and stops the fake server on close', async () => {
    const ctx = fakeContext();
    const a = await getMailService(ctx);
    const b = await getMailService(ctx);
    expect(b).toBe(a);
    const port = a.mailbox!.port;
    expect(port).toBeGreaterThan(0);
    for (const fn of closers.splice(0).reverse()) await fn();
    const net = await import('node:net');
    const refused = await new Promise<boolean>((resolve) => {
      const s = net.connect(port, '127.0.0.1');
      s.on('connect', () => {
        s.destroy();
        resolve(false);
      });
      s.on('error', () => resolve(true));
    });
    expect(refused).toBe(true);
  });

  it('does not start the fake server when an SMTP relay is configured', async () => {
    const ctx = fakeContext({ SMTP_URL: 'smtp://127.0.0.1:1' });
    const mail = await getMailService(ctx);
    expect(mail.mailbox).toBeNull();
  });
});

describe('reading received messages (mailparser)', () => {
  it('reads a base64 text part inside a multipart message', async () => {
    const raw = [
      'To: c@example.test',
      'Subject: =?UTF-8?B?w4lsw6ltZW50cw==?= du jour',
      'Content-Type: multipart/alternative; boundary="b1"',
      '',
      '--b1',
      'Content-Type: text/plain; charset=utf-8',
      'Content-Transfer-Encoding: base64',
      '',
      Buffer.from('Épopée https://x.test/a.').toString('base64'),
      '--b1--',
      '',
    ].join('\r\n');
    const m = await parseMessage(raw);
    expect(m.subject).toBe('Éléments du jour');
    expect(m.text).toBe('Épopée https://x.test/a.');
    expect(extractLinks(m.text)).toEqual(['https://x.test/a']);
  });

  it('joins adjacent encoded words without the space between them', async () => {
    const m = await parseMessage(['To: c@example.test', 'Subject: =?UTF-8?Q?Caf=C3=A9?= =?UTF-8?Q?_ouvert?=', '', 'x', ''].join('\r\n'));
    expect(m.subject).toBe('Café ouvert');
  });
});
