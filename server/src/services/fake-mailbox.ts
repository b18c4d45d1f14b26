/**
 * The fake SMTP server of development, demo and tests (services/mail.ts loads this module only
 * when SMTP_URL is unset): it listens on 127.0.0.1, keeps every message it receives in memory
 * and the development mailbox (routes/dev.ts) lists them.
 */
import { SMTPServer } from 'smtp-server';
import { extractLinks, parseMessage } from './mime.ts';

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
          const to = session.envelope.rcptTo.map((a) => a.address).join(', ');
          const from = session.envelope.mailFrom ? session.envelope.mailFrom.address : '';
          // The sender hears "accepted" only once the message is kept, so it is listed at once.
          this.keep(Buffer.concat(chunks), to, from).then(
            () => callback(),
            (err: unknown) => callback(err as Error),
          );
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

  async keep(raw: string | Buffer, to: string, from: string): Promise<KeptMessage> {
    const parsed = await parseMessage(raw);
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

