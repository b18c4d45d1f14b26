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

/**
 * Replace XML comments by blanks of the same length (newlines kept), so searches skip them;
 * `unclosed` is where a comment starts that never ends.
 */
function maskComments(text: string): { masked: string; unclosed: number | null } {
  const parts: string[] = [];
  let from = 0;
  for (let open = text.indexOf('<!--'); open >= 0; open = text.indexOf('<!--', from)) {
    const close = text.indexOf('-->', open + 4);
    const end = close < 0 ? text.length : close + 3;
    const comment = text.slice(open, end);
    parts.push(text.slice(from, open), /[\r\n]/.test(comment) ? comment.replace(/[^\r\n]/g, ' ') : ' '.repeat(comment.length));
    from = end;
    if (close < 0) return { masked: parts.join(''), unclosed: open };
  }
  parts.push(text.slice(from));
  return { masked: parts.join(''), unclosed: null };
}

const OMM_OPEN = /<([A-Za-z_][\w.-]*:)?omm(?=[\s>/])/g;
const OMM_CLOSE = /<\/([A-Za-z_][\w.-]*:)?omm/g;

/**
 * Where each <omm> element sits: from its start tag to the end of its matching close tag, or to
 * the next <omm> (or the end) when it is not closed. One pass over the text for the start tags
 * (stopping after `limit` chunks), one for the close tags, then the two lists are walked
 * together, so the cost is linear in the text whatever it holds.
 */
function findOmmChunks(masked: string, limit = Infinity): Chunk[] {
  const opens: { start: number; prefix: string }[] = [];
  OMM_OPEN.lastIndex = 0;
  // One start tag past the limit is read too: it is where the last chunk read ends.
  for (let m = OMM_OPEN.exec(masked); m !== null && opens.length <= limit; m = OMM_OPEN.exec(masked)) {
    opens.push({ start: m.index, prefix: m[1] ?? '' });
  }
  // Close tags per namespace prefix, in text order; one cursor each, moving forward only.
  const closes = new Map<string, { at: number[]; next: number }>();
  OMM_CLOSE.lastIndex = 0;
  for (let m = OMM_CLOSE.exec(masked); m !== null; m = OMM_CLOSE.exec(masked)) {
    const prefix = m[1] ?? '';
    let list = closes.get(prefix);
    if (!list) closes.set(prefix, (list = { at: [], next: 0 }));
    list.at.push(m.index);
  }
  // The first '>' at or after a position. Positions asked for only grow, and no '>' lies
  // between the last position asked and the '>' found then, so each stretch is searched once.
  let asked = -1;
  let found = -1;
  const gtAfter = (from: number): number => {
    if (asked < 0 || (found >= 0 && found < from)) {
      asked = from;
      found = masked.indexOf('>', from);
    }
    return found;
  };
  return opens.slice(0, limit).map((o, i) => {
    const limitAt = opens[i + 1]?.start ?? masked.length;
    const list = closes.get(o.prefix);
    let close = -1;
    if (list) {
      while (list.next < list.at.length && (list.at[list.next] as number) < o.start) list.next++;
      close = list.at[list.next] ?? -1;
    }
    if (close < 0 || close >= limitAt) return { start: o.start, end: limitAt };
    const gt = gtAfter(close);
    return { start: o.start, end: gt < 0 || gt >= limitAt ? limitAt : gt + 1 };
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

/** Elements nested deeper than this are refused (an OMM is six levels deep: omm, body, segment, data, meanElements, a value). */
const MAX_DEPTH = 16;
/** At most this many elements in one <omm> (CCSDS 502.0-B-3 defines about seventy keywords). */
const MAX_ELEMENTS = 1000;
/** At most this many pieces (tags, text runs, comments) in one <omm>. */
const MAX_TOKENS = 10 * MAX_ELEMENTS;
/** At most this many attributes on one element (OMM uses id, version, units and namespace declarations). */
const MAX_ATTRIBUTES = 32;

const TOKEN = new RegExp(
  `<!--[\\s\\S]*?-->|<!\\[CDATA\\[([\\s\\S]*?)\\]\\]>|<\\?[\\s\\S]*?\\?>|<\\/([^\\s>]+)\\s*>|<([^\\s/>!?]+)((?:\\s+[^\\s=/>]+\\s*=\\s*(?:"[^"]*"|'[^']*')){0,${MAX_ATTRIBUTES}})\\s*(\\/?)>|[^<]+`,
  'y',
);
/** A start tag with more attributes than MAX_ATTRIBUTES (checked where TOKEN stopped). */
const CROWDED_TAG = new RegExp(`<[^\\s/>!?]+(?:\\s+[^\\s=/>]+\\s*=\\s*(?:"[^"]*"|'[^']*')){${MAX_ATTRIBUTES + 1}}`, 'y');
const ATTR = /([^\s=/>]+)\s*=\s*(?:"([^"]*)"|'([^']*)')/g;

type ReadXml = { ok: true; root: XmlElement } | { ok: false; at: number; limit?: string };

/**
 * Read a chunk into elements that keep their offsets, so every value can be reported at its
 * own line and column. Stops at the first thing it cannot read (XMLValidator of fast-xml-parser
 * then says what is wrong) or at the first limit crossed (depth, elements, attributes), so a
 * hostile chunk costs no more than the limits allow before the validator sees it.
 */
function readElements(xml: string): ReadXml {
  const root: XmlElement = { name: '#document', attrs: new Map(), children: [], text: '', textAt: 0, at: 0 };
  const stack: XmlElement[] = [root];
  // Text pieces per open element, joined when it closes (growing one string and trimming it
  // for every piece would cost the square of the number of pieces).
  const pieces: string[][] = [[]];
  const seenText: boolean[] = [false];
  let elements = 0;
  let tokens = 0;
  TOKEN.lastIndex = 0;
  while (TOKEN.lastIndex < xml.length) {
    const at = TOKEN.lastIndex;
    if (++tokens > MAX_TOKENS) return { ok: false, at, limit: `one <omm> holds more than ${MAX_TOKENS} pieces (tags, text and comments)` };
    const m = TOKEN.exec(xml);
    if (!m) {
      CROWDED_TAG.lastIndex = at;
      if (CROWDED_TAG.test(xml)) return { ok: false, at, limit: `an element has more than ${MAX_ATTRIBUTES} attributes` };
      return { ok: false, at };
    }
    const top = stack[stack.length - 1] as XmlElement;
    const [whole, cdata, endName, startName, attrText = '', selfClose] = m;
    if (startName !== undefined) {
      if (++elements > MAX_ELEMENTS) return { ok: false, at, limit: `one <omm> holds more than ${MAX_ELEMENTS} elements` };
      const el: XmlElement = { name: localName(startName), attrs: new Map(), children: [], text: '', textAt: at + whole.length, at };
      for (const a of attrText.matchAll(ATTR)) {
        el.attrs.set(localName(a[1] ?? ''), { value: decodeEntities(a[2] ?? a[3] ?? ''), at: at + startName.length + 1 + (a.index ?? 0) });
      }
      top.children.push(el);
      if (selfClose !== '/') {
        stack.push(el);
        pieces.push([]);
        seenText.push(false);
        if (stack.length > MAX_DEPTH + 1) return { ok: false, at, limit: `elements are nested more than ${MAX_DEPTH} levels deep (an OMM needs six)` };
      }
    } else if (endName !== undefined) {
      if (stack.length <= 1) return { ok: false, at };
      top.text = (pieces.pop() as string[]).join('');
      seenText.pop();
      stack.pop();
    } else if (cdata !== undefined || !whole.startsWith('<')) {
      const piece = cdata ?? decodeEntities(whole);
      const depth = stack.length - 1;
      if (!seenText[depth] && piece.trim() !== '') {
        const lead = whole.length - whole.trimStart().length;
        top.textAt = at + (cdata !== undefined ? 9 : lead);
        seenText[depth] = true;
      }
      (pieces[depth] as string[]).push(piece);
    }
  }
  if (stack.length !== 1) return { ok: false, at: xml.length };
  root.text = (pieces[0] as string[]).join('');
  return { ok: true, root };
}

/** Parse one <omm> element's text; `chunk` is where it sits in the whole text. */
function parseOmmChunk(text: string, chunk: Chunk, pos: TextPositions): ParseResult {
  const xml = text.slice(chunk.start, chunk.end);
  const base = pos.at(chunk.start);
  const absolute = (line: number, column: number): { line: number; column: number } =>
    line === 1 ? { line: base.line, column: base.column + column - 1 } : { line: base.line + line - 1, column };
  const doc = readElements(xml);
  if (!doc.ok && doc.limit) return reject('structure', { field: 'xml', ...pos.at(chunk.start + doc.at) }, doc.limit);
  const valid = XMLValidator.validate(xml);
  if (valid !== true) {
    const { err } = valid;
    const where = absolute(err.line ?? 1, err.col ?? 1);
    return reject('syntax', { field: 'xml', ...where }, `not well-formed XML: ${err.msg}`);
  }
  const root = doc.ok && doc.root.children.length === 1 ? doc.root.children[0] : undefined;
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

/** Text outside the <omm> elements that is neither prolog, comment nor the <ndm> wrapper (at most `limit` pieces). */
function strayText(masked: string, chunks: Chunk[], limit = Infinity): { offset: number; text: string }[] {
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
  while (stray.length < limit && (m = re.exec(outside)) !== null) stray.push({ offset: m.index, text: m[0].trimEnd() });
  return stray;
}

function xmlEntries(text: string, limit = Infinity): { messages: ParsedEntry[]; stray: ParsedEntry[] } {
  const pos = new TextPositions(text);
  const doctype = /<!(?:DOCTYPE|ENTITY)/i.exec(text);
  if (doctype) {
    const p = pos.at(doctype.index);
    return {
      messages: [],
      stray: [{ index: 1, line: p.line, result: reject('syntax', { field: 'xml', ...p }, 'DOCTYPE and ENTITY declarations are not accepted') }],
    };
  }
  const { masked, unclosed } = maskComments(text);
  const chunks = findOmmChunks(masked, limit);
  // Reading stopped at the cap: what follows the last chunk read is not looked at.
  const read = chunks.length >= limit ? masked.slice(0, chunks[chunks.length - 1]?.end ?? masked.length) : masked;
  const messages: ParsedEntry[] = chunks.map((c) => ({
    index: 0,
    line: pos.at(c.start).line,
    result: parseOmmChunk(text, c, pos),
  }));
  const stray: ParsedEntry[] = strayText(read, chunks, limit).map((s) => {
    const p = pos.at(s.offset);
    const what = s.text.length > 30 ? `${s.text.slice(0, 30)}...` : s.text;
    return {
      index: 0,
      line: p.line,
      result: reject('syntax', { field: 'xml', ...p }, `"${what}" is outside any <omm> element`),
    };
  });
  if (unclosed !== null && chunks.every((c) => c.end <= unclosed)) {
    const p = pos.at(unclosed);
    stray.push({ index: 0, line: p.line, result: reject('syntax', { field: 'xml', ...p }, 'a comment starts here (<!--) and is never closed (-->)') });
  }
  return { messages, stray };
}

/**
 * Every <omm> of an XML text (a lone <omm> or an <ndm> holding many), each with its own result;
 * text outside any <omm> is an entry of its own. At most `limit` entries are read.
 */
export function parseOmmXmlMany(text: string, limit = Infinity): ParsedEntry[] {
  if (typeof text !== 'string') return [];
  const { messages, stray } = xmlEntries(text, limit);
  const all = [...messages, ...stray].sort((a, b) => a.line - b.line).slice(0, limit);
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
