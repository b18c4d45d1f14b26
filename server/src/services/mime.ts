/**
 * Reading the messages the fake mailbox receives (services/fake-mailbox.ts), with mailparser:
 * headers, multipart, transfer encodings and RFC 2047 encoded words. Development and tests only;
 * this module is loaded only when the fake SMTP server runs.
 */
import { simpleParser, type AddressObject } from 'mailparser';

export interface ParsedMessage {
  to: string;
  subject: string;
  text: string;
  html: string;
}

const addresses = (a: AddressObject | AddressObject[] | undefined): string =>
  (Array.isArray(a) ? a : a ? [a] : [])
    .flatMap((o) => o.value.map((v) => v.address ?? ''))
    .filter(Boolean)
    .join(', ');

/** One received message as the mailbox shows it. */
export async function parseMessage(raw: string | Buffer): Promise<ParsedMessage> {
  const m = await simpleParser(raw, { skipImageLinks: true, skipTextToHtml: true, skipTextLinks: true });
  return {
    to: addresses(m.to),
    subject: m.subject ?? '',
    text: (m.text ?? '').replace(/\r\n/g, '\n').replace(/\n$/, ''),
    html: typeof m.html === 'string' ? m.html : '',
  };
}

/** Every http(s) link in a text, once each, without trailing punctuation. */
export function extractLinks(body: string): string[] {
  const found = body.match(/https?:\/\/[^\s<>"')]+/g) ?? [];
  return [...new Set(found.map((l) => l.replace(/[.,;:]+$/, '').replace(/&amp;/g, '&')))];
}
