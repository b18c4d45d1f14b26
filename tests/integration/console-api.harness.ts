/**
 * Helpers for the console-API integration tests (accounts, members, roles, console-api specs).
 *
 *   const t = await startTestApp();       // real app, fresh temp SQLite file, fake SMTP
 *   const b = t.browser();                // a cookie-keeping client; b.post() sends X-CSRF-Token
 *   await b.signUpAndVerify({ email })    // through the mailbox, like a person would
 *   await t.mailbox()                     // GET /dev/mailbox.json
 *   await t.close()
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import request from 'supertest';
import type { Response } from 'supertest';
import { createApp, type NadirlineApp } from '@nadirline/server/app';
import { loadConfig } from '@nadirline/server/config';

export interface MailboxMessage {
  id: number;
  to: string;
  subject: string;
  text: string;
  html: string;
  links: string[];
  receivedAt: string;
}

export const PASSWORD = 'correct horse battery';

export interface TestApp extends NadirlineApp {
  dir: string;
  /** A new browser, from its own client address unless one is given. */
  browser(clientAddress?: string): Browser;
  mailbox(): Promise<MailboxMessage[]>;
  /** The newest message sent to `to`, its first link and the token at the end of that link. */
  lastMailTo(to: string): Promise<{ message: MailboxMessage; link: string; token: string }>;
}

export async function startTestApp(env: Record<string, string> = {}): Promise<TestApp> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'nadirline-console-api-'));
  const config = loadConfig({ NODE_ENV: 'test', SQLITE_FILE: path.join(dir, 'test.sqlite'), PUBLIC_URL: 'http://console.test', LOG_LEVEL: 'silent', DEMO: 'false', TRUST_PROXY: 'loopback', ...env });
  const built = await createApp(config);
  const t: TestApp = {
    ...built,
    dir,
    browser: (clientAddress?: string) => new Browser(built.app, clientAddress),
    async mailbox() {
      const res = await request(built.app).get('/dev/mailbox.json').expect(200);
      return (res.body as { messages: MailboxMessage[] }).messages;
    },
    async lastMailTo(to) {
      const messages = (await t.mailbox()).filter((m) => m.to === to);
      const message = messages.at(-1);
      if (!message) throw new Error(`no message to ${to}`);
      const link = message.links[0];
      if (!link) throw new Error(`message to ${to} has no link`);
      const url = new URL(link);
      const token = url.searchParams.get('token') ?? url.pathname.split('/').at(-1) ?? '';
      return { message, link, token };
    },
    async close() {
      await built.close();
      fs.rmSync(dir, { recursive: true, force: true });
    },
  };
  return t;
}

let counter = 0;
export function uniqueEmail(label = 'person'): string {
  counter += 1;
  return `${label}-${counter}-${Date.now().toString(36)}@example.test`;
}

/** A response on its way; `.expect(status)` fails with the problem body when the status differs. */
export type Pending = Promise<Response> & { expect(status: number): Promise<Response> };

function pending(p: Promise<Response>): Pending {
  return Object.assign(p, {
    expect: (status: number) =>
      p.then((res) => {
        if (res.status !== status) throw new Error(`expected ${status}, got ${res.status}: ${JSON.stringify(res.body)}`);
        return res;
      }),
  });
}

let clients = 0;

/**
 * A person with one browser: keeps the session cookie and the CSRF token. Each browser comes
 * from its own client address (X-Forwarded-For, as a reverse proxy on this machine would say),
 * so the per-client throttles of sign-up, e-mails and invitations count each person apart.
 */
export class Browser {
  readonly agent: ReturnType<typeof request.agent>;
  readonly clientAddress: string;
  csrf = '';
  constructor(app: NadirlineApp['app'], clientAddress?: string) {
    clients += 1;
    this.clientAddress = clientAddress ?? `198.51.${Math.floor(clients / 250) % 250}.${(clients % 250) + 1}`;
    this.agent = request.agent(app).set('X-Forwarded-For', this.clientAddress);
  }

  async session(): Promise<Response> {
    const res = await this.agent.get('/api/session').expect(200);
    this.csrf = (res.body as { csrfToken: string }).csrfToken;
    return res;
  }

  private async ensureCsrf(): Promise<void> {
    if (!this.csrf) await this.session();
  }

  get(url: string) {
    return this.agent.get(url);
  }

  send(method: 'post' | 'patch' | 'delete', url: string, body?: object): Pending {
    return pending(
      (async () => {
        await this.ensureCsrf();
        const req = this.agent[method](url).set('X-CSRF-Token', this.csrf);
        return body === undefined ? req : req.send(body);
      })(),
    );
  }

  post(url: string, body?: object) {
    return this.send('post', url, body ?? {});
  }
  patch(url: string, body?: object) {
    return this.send('patch', url, body ?? {});
  }
  delete(url: string) {
    return this.send('delete', url);
  }

  async signIn(email: string, password = PASSWORD): Promise<Response> {
    const res = await this.post('/api/auth/signin', { email, password });
    if (res.status === 200) this.csrf = (res.body as { csrfToken: string }).csrfToken;
    return res;
  }
}

export interface Person {
  email: string;
  name: string;
  userId: string;
  browser: Browser;
  /** Id of the organization made at sign-up (when organizationName was given). */
  orgId: string | undefined;
}

/** Signs up, follows the confirmation link from the mailbox, signs in. */
export async function signUpAndVerify(t: TestApp, opts: { email?: string; name?: string; organizationName?: string } = {}): Promise<Person> {
  const email = opts.email ?? uniqueEmail();
  const name = opts.name ?? `Tester ${email.split('@')[0]}`;
  const browser = t.browser();
  const signup = await browser.post('/api/auth/signup', { email, name, password: PASSWORD, ...(opts.organizationName ? { organizationName: opts.organizationName } : {}) });
  if (signup.status !== 201) throw new Error(`signup ${signup.status}: ${JSON.stringify(signup.body)}`);
  const { token } = await t.lastMailTo(email);
  const verified = await browser.post('/api/auth/verify-email', { token });
  if (verified.status !== 200) throw new Error(`verify ${verified.status}: ${JSON.stringify(verified.body)}`);
  const signin = await browser.signIn(email);
  if (signin.status !== 200) throw new Error(`signin ${signin.status}: ${JSON.stringify(signin.body)}`);
  const body = signin.body as { user: { id: string }; memberships: Array<{ organization: { id: string } }> };
  return { email, name, userId: body.user.id, browser, orgId: body.memberships[0]?.organization.id };
}
