/** Reading the messages the fake mailbox receives (services/fake-mailbox.ts). */
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
