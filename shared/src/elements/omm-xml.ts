/**
 * OMM in XML (CCSDS 502.0-B-3 section 8.5 and the NDM/XML schema): one <omm> message, or an
 * <ndm> holding several. Each <omm> is checked and parsed on its own, so one broken message
 * does not sink its neighbours. fast-xml-parser's validator checks well-formedness (and places
 * syntax errors); a small reader then walks the checked text keeping offsets, so every value is
 * reported at its own line and column (the library's parser keeps no positions).
 */
import { XMLValidator } from 'fast-xml-parser';
import { escapeMarkup } from '../markup.ts';
import type { ElementSet, ElementSetError, ParseResult, ParsedEntry } from '../types.ts';
import { reject } from './errors.ts';
import type { FieldLocation } from './errors.ts';
import { buildFromOmm, fieldText, isOmmKeyword, ommSections } from './omm-common.ts';
import type { OmmExportOptions, OmmField, OmmItem } from './omm-common.ts';
import { TextPositions } from './text-position.ts';

const CONTAINERS = new Set([
  'header',
  'body',
  'segment',
  'metadata',
  'data',
  'meanElements',
  'spacecraftParameters',
  'tleParameters',
  'covarianceMatrix',
  'userDefinedParameters',
]);

interface Chunk {
  start: number;
  end: number;
}

/** Replace XML comments by blanks of the same length (newlines kept), so searches skip them. */
function maskComments(text: string): string {
  return text.replace(/<!--[\s\S]*?(?:-->|$)/g, (m) => m.replace(/[^\r\n]/g, ' '));
}

const OMM_OPEN = /<([A-Za-z_][\w.-]*:)?omm(?=[\s>/])/g;

function findOmmChunks(masked: string): Chunk[] {
  const opens: { start: number; prefix: string }[] = [];
  for (const m of masked.matchAll(OMM_OPEN)) opens.push({ start: m.index, prefix: m[1] ?? '' });
  return opens.map((o, i) => {
    const limit = opens[i + 1]?.start ?? masked.length;
    const close = masked.indexOf(`</${o.prefix}omm`, o.start);
    if (close < 0 || close >= limit) return { start: o.start, end: limit };
    const gt = masked.indexOf('>', close);
    return { start: o.start, end: gt < 0 || gt >= limit ? limit : gt + 1 };
  });
}

type Walk = { ok: true } | ElementSetError;

/** An element of a well-formed chunk, with offsets into the chunk. */
interface XmlElement {
  /** Local name (namespace prefix removed). */
  name: string;
  attrs: Map<string, { value: string; at: number }>;
  children: XmlElement[];
  text: string;
  /** Offset of the first non-blank character of the text, or just after the start tag. */
  textAt: number;
  at: number;
}

const ENTITIES: Record<string, string> = { lt: '<', gt: '>', amp: '&', quot: '"', apos: "'" };

function decodeEntities(s: string): string {
  return s.replace(/&(#x[0-9a-fA-F]+|#\d+|[A-Za-z]+);/g, (m, e: string) => {
    if (e.startsWith('#')) {
      const code = e[1] === 'x' ? parseInt(e.slice(2), 16) : parseInt(e.slice(1), 10);
      return code <= 0x10ffff ? String.fromCodePoint(code) : m;
    }
    return ENTITIES[e] ?? m;
  });
}

function localName(qname: string): string {
  const i = qname.indexOf(':');
  return i < 0 ? qname : qname.slice(i + 1);
}

const TOKEN =
  /<!--[\s\S]*?-->|<!\[CDATA\[([\s\S]*?)\]\]>|<\?[\s\S]*?\?>|<\/([^\s>]+)\s*>|<([^\s/>!?]+)((?:\s+[^\s=/>]+\s*=\s*(?:"[^"]*"|'[^']*'))*)\s*(\/?)>|[^<]+/y;
const ATTR = /([^\s=/>]+)\s*=\s*(?:"([^"]*)"|'([^']*)')/g;

/**
 * Read a chunk that XMLValidator (fast-xml-parser) has found well-formed into elements that
 * keep their offsets, so every value can be reported at its own line and column.
 */
function readElements(xml: string): XmlElement | null {
  const root: XmlElement = { name: '#document', attrs: new Map(), children: [], text: '', textAt: 0, at: 0 };
  const stack: XmlElement[] = [root];
  TOKEN.lastIndex = 0;
  while (TOKEN.lastIndex < xml.length) {
    const at = TOKEN.lastIndex;
    const m = TOKEN.exec(xml);
    if (!m) return null;
    const top = stack[stack.length - 1] as XmlElement;
    const [whole, cdata, endName, startName, attrText = '', selfClose] = m;
    if (startName !== undefined) {
      const el: XmlElement = { name: localName(startName), attrs: new Map(), children: [], text: '', textAt: at + whole.length, at };
      for (const a of attrText.matchAll(ATTR)) {
        el.attrs.set(localName(a[1] ?? ''), { value: decodeEntities(a[2] ?? a[3] ?? ''), at: at + startName.length + 1 + (a.index ?? 0) });
      }
      top.children.push(el);
      if (selfClose !== '/') stack.push(el);
    } else if (endName !== undefined) {
      if (stack.length <= 1) return null;
      stack.pop();
    } else if (cdata !== undefined || !whole.startsWith('<')) {
      const piece = cdata ?? decodeEntities(whole);
      if (top.text.trim() === '' && piece.trim() !== '') {
        const lead = whole.length - whole.trimStart().length;
        top.textAt = at + (cdata !== undefined ? 9 : lead);
      }
      top.text += piece;
    }
  }
  return stack.length === 1 ? root : null;
}

/** Parse one <omm> element's text; `chunk` is where it sits in the whole text. */
function parseOmmChunk(text: string, chunk: Chunk, pos: TextPositions): ParseResult {
  const xml = text.slice(chunk.start, chunk.end);
  const base = pos.at(chunk.start);
  const absolute = (line: number, column: number): { line: number; column: number } =>
    line === 1 ? { line: base.line, column: base.column + column - 1 } : { line: base.line + line - 1, column };
  const valid = XMLValidator.validate(xml);
  if (valid !== true) {
    const { err } = valid;
    const where = absolute(err.line ?? 1, err.col ?? 1);
    return reject('syntax', { field: 'xml', ...where }, `not well-formed XML: ${err.msg}`);
  }
  const doc = readElements(xml);
  const root = doc?.children.length === 1 ? doc.children[0] : undefined;
  if (!root || root.name !== 'omm') {
    return reject('syntax', { field: 'xml', ...base }, 'expected one well-formed <omm> element');
  }
  const at = (offset: number, field: string): FieldLocation => ({ field, ...pos.at(chunk.start + offset) });

  const items = new Map<string, OmmItem>();
  const version = root.attrs.get('version');
  if (!version) {
    return reject('missing', { field: 'CCSDS_OMM_VERS', ...base }, 'the <omm> element needs its version attribute (version="3.0"; CCSDS 502.0-B-3 section 8)');
  }
  items.set('CCSDS_OMM_VERS', { value: version.value, ...pos.at(chunk.start + version.at) });
  if (root.children.length === 0 && root.text.trim() === '') {
    return reject('structure', { field: 'omm', ...base }, 'the <omm> element is empty; it must hold <header> and <body>');
  }

  const walk = (node: XmlElement): Walk => {
    if (node.text.trim() !== '') {
      return reject('structure', at(node.textAt, node.name), `<${node.name}> holds text "${node.text.trim().slice(0, 30)}" where only elements belong`);
    }
    const seen = new Set<string>();
    for (const child of node.children) {
      const key = child.name;
      if (key === 'COMMENT' || key === 'USER_DEFINED') continue;
      if (CONTAINERS.has(key)) {
        if (seen.has(key)) return reject('duplicate', at(child.at, key), `<${key}> appears more than once in one <omm>`);
        seen.add(key);
        const r = walk(child);
        if (!r.ok) return r;
        continue;
      }
      if (!isOmmKeyword(key)) {
        return reject('unknown-keyword', at(child.at, key), `<${key}> is not an OMM element (CCSDS 502.0-B-3 tables 4-1 to 4-3)`);
      }
      if (key === 'CCSDS_OMM_VERS') continue;
      if (items.has(key)) return reject('duplicate', at(child.at, key), `<${key}> appears more than once`);
      if (child.children.length > 0) return reject('structure', at(child.at, key), `<${key}> must hold a value, not elements`);
      const item: OmmItem = { value: child.text.trim(), ...pos.at(chunk.start + child.textAt) };
      const units = child.attrs.get('units');
      if (units) item.unit = units.value;
      items.set(key, item);
    }
    return { ok: true };
  };
  const walked = walk(root);
  if (!walked.ok) return walked;
  return buildFromOmm(items, { source: 'omm-xml', requireHeader: true, line: base.line, column: base.column });
}

/** Text outside the <omm> elements that is neither prolog, comment nor the <ndm> wrapper. */
function strayText(masked: string, chunks: Chunk[]): { offset: number; text: string }[] {
  const parts: string[] = [];
  let from = 0;
  for (const c of chunks) {
    parts.push(masked.slice(from, c.start), masked.slice(c.start, c.end).replace(/[^\r\n]/g, ' '));
    from = c.end;
  }
  parts.push(masked.slice(from));
  const outside = parts
    .join('')
    .replace(/<\?xml[\s\S]*?\?>|<\/?(?:[A-Za-z_][\w.-]*:)?ndm(?:\s[^>]*)?>/g, (m) => ' '.repeat(m.length));
  const stray: { offset: number; text: string }[] = [];
  const re = /\S[^\r\n]*/g;
  let m: RegExpExecArray | null;
  while ((m = re.exec(outside)) !== null) stray.push({ offset: m.index, text: m[0].trimEnd() });
  return stray;
}

function xmlEntries(text: string): { messages: ParsedEntry[]; stray: ParsedEntry[] } {
  const pos = new TextPositions(text);
  const doctype = /<!(?:DOCTYPE|ENTITY)/i.exec(text);
  if (doctype) {
    const p = pos.at(doctype.index);
    return {
      messages: [],
      stray: [{ index: 1, line: p.line, result: reject('syntax', { field: 'xml', ...p }, 'DOCTYPE and ENTITY declarations are not accepted') }],
    };
  }
  const masked = maskComments(text);
  const chunks = findOmmChunks(masked);
  const messages: ParsedEntry[] = chunks.map((c) => ({
    index: 0,
    line: pos.at(c.start).line,
    result: parseOmmChunk(text, c, pos),
  }));
  const stray: ParsedEntry[] = strayText(masked, chunks).map((s) => {
    const p = pos.at(s.offset);
    const what = s.text.length > 30 ? `${s.text.slice(0, 30)}...` : s.text;
    return {
      index: 0,
      line: p.line,
      result: reject('syntax', { field: 'xml', ...p }, `"${what}" is outside any <omm> element`),
    };
  });
  return { messages, stray };
}

/** Every <omm> of an XML text (a lone <omm> or an <ndm> holding many), each with its own result. */
export function parseOmmXmlMany(text: string): ParsedEntry[] {
  if (typeof text !== 'string') return [];
  const { messages, stray } = xmlEntries(text);
  const all = [...messages, ...stray].sort((a, b) => a.line - b.line);
  return all.map((e, i) => ({ ...e, index: i + 1 }));
}

/** Parse exactly one OMM in XML (a lone <omm>, or an <ndm> holding one). */
export function parseOmmXml(text: string): ParseResult {
  if (typeof text !== 'string') return reject('format', { field: 'text' }, `expected text, got ${typeof text}`);
  const { messages, stray } = xmlEntries(text);
  if (stray[0]) return stray[0].result;
  if (messages.length === 0) {
    if (text.trim() === '') return reject('empty', { field: 'text' }, 'no OMM message found (the text is empty)');
    return reject('missing', { field: 'omm', line: 1, column: 1 }, 'no <omm> element found');
  }
  if (messages.length > 1) {
    return reject('structure', { field: 'omm', line: messages[1]?.line ?? 1 }, `the text holds ${messages.length} <omm> messages; expected one (use parseOmmXmlMany or parseElementSets)`);
  }
  return (messages[0] as ParsedEntry).result;
}

const escapeXml = (s: string) => escapeMarkup(s, 'xml');

function ommElement(es: ElementSet, options: OmmExportOptions, indent: string): string {
  const s = ommSections(es, options);
  const leaf = (f: OmmField, pad: string): string =>
    `${pad}<${f.keyword}${f.unit ? ` units="${escapeXml(f.unit)}"` : ''}>${escapeXml(fieldText(f))}</${f.keyword}>`;
  const i1 = `${indent}  `;
  const i2 = `${i1}  `;
  const i3 = `${i2}  `;
  const i4 = `${i3}  `;
  const i5 = `${i4}  `;
  const version = s.header.find((f) => f.keyword === 'CCSDS_OMM_VERS')?.value ?? '3.0';
  return [
    `${indent}<omm id="CCSDS_OMM_VERS" version="${escapeXml(String(version))}">`,
    `${i1}<header>`,
    ...s.header.filter((f) => f.keyword !== 'CCSDS_OMM_VERS').map((f) => leaf(f, i2)),
    `${i1}</header>`,
    `${i1}<body>`,
    `${i2}<segment>`,
    `${i3}<metadata>`,
    ...s.metadata.map((f) => leaf(f, i4)),
    `${i3}</metadata>`,
    `${i3}<data>`,
    `${i4}<meanElements>`,
    ...s.meanElements.map((f) => leaf(f, i5)),
    `${i4}</meanElements>`,
    `${i4}<tleParameters>`,
    ...s.tleParameters.map((f) => leaf(f, i5)),
    `${i4}</tleParameters>`,
    `${i3}</data>`,
    `${i2}</segment>`,
    `${i1}</body>`,
    `${indent}</omm>`,
  ].join('\n');
}

/** Write an element set as an OMM in XML (CCSDS 502.0-B-3 section 8.5, SGP4 theory). */
export function toOmmXml(es: ElementSet, options: OmmExportOptions = {}): string {
  return `<?xml version="1.0" encoding="UTF-8"?>\n${ommElement(es, options, '')}\n`;
}

/** Write several element sets as one <ndm> of OMM messages. */
export function toNdmXml(sets: readonly ElementSet[], options: OmmExportOptions = {}): string {
  const body = sets.map((es) => ommElement(es, options, '  ')).join('\n');
  return `<?xml version="1.0" encoding="UTF-8"?>\n<ndm>\n${body}\n</ndm>\n`;
}
