/**
 * OMM in XML (CCSDS 502.0-B-3 section 8.5 and the NDM/XML schema): one <omm> message, or an
 * <ndm> holding several. Each <omm> is checked and parsed on its own, so one broken message
 * does not sink its neighbours. Positions of values are found by searching the text, as
 * fast-xml-parser reports positions only for syntax errors.
 */
import { XMLParser, XMLValidator } from 'fast-xml-parser';
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

const parser = new XMLParser({
  ignoreAttributes: false,
  attributeNamePrefix: '@_',
  removeNSPrefix: true,
  parseTagValue: false,
  parseAttributeValue: false,
  trimValues: true,
});

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

/** Parse one <omm> element's text; `offset` is where it starts in the whole text. */
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
  let doc: unknown;
  try {
    doc = parser.parse(xml);
  } catch (e) {
    return reject('syntax', { field: 'xml', ...base }, `not well-formed XML: ${e instanceof Error ? e.message : String(e)}`);
  }
  const root = (doc as Record<string, unknown>).omm;
  if (typeof root !== 'object' || root === null || Array.isArray(root)) {
    return reject('structure', { field: 'omm', ...base }, 'the <omm> element is empty; it must hold <header> and <body>');
  }

  /** Position of the value of the n-th <KEYWORD> in this chunk. */
  const locate = (keyword: string): FieldLocation => {
    const re = new RegExp(`<(?:[A-Za-z_][\\w.-]*:)?${keyword.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}(?=[\\s>/])`);
    const m = re.exec(xml);
    if (!m) return { field: keyword, ...base };
    const gt = xml.indexOf('>', m.index);
    let at = gt < 0 ? m.index : gt + 1;
    while (at < xml.length && /\s/.test(xml[at] ?? '')) at++;
    const p = pos.at(chunk.start + (gt < 0 ? m.index : at));
    return { field: keyword, line: p.line, column: p.column };
  };

  const items = new Map<string, OmmItem>();
  const rootObj = root as Record<string, unknown>;
  const version = rootObj['@_version'];
  if (typeof version !== 'string') {
    return reject('missing', { field: 'CCSDS_OMM_VERS', ...base }, 'the <omm> element needs its version attribute (version="3.0"; CCSDS 502.0-B-3 section 8)');
  }
  const vm = /version\s*=\s*["']/.exec(xml);
  const vpos = vm ? pos.at(chunk.start + vm.index + vm[0].length) : base;
  items.set('CCSDS_OMM_VERS', { value: version, line: vpos.line, column: vpos.column });

  const walk = (node: Record<string, unknown>, tag: string): Walk => {
    for (const [key, val] of Object.entries(node)) {
      if (key.startsWith('@_')) continue;
      if (key === '#text') {
        if (String(val).trim() !== '') {
          return reject('structure', locate(tag), `<${tag}> holds text "${String(val).slice(0, 30)}" where only elements belong`);
        }
        continue;
      }
      if (key === 'COMMENT' || key === 'USER_DEFINED') continue;
      if (CONTAINERS.has(key)) {
        if (Array.isArray(val)) return reject('duplicate', locate(key), `<${key}> appears more than once in one <omm>`);
        if (typeof val === 'object' && val !== null) {
          const r = walk(val as Record<string, unknown>, key);
          if (!r.ok) return r;
        } else if (String(val).trim() !== '') {
          return reject('structure', locate(key), `<${key}> must hold elements, not text`);
        }
        continue;
      }
      if (!isOmmKeyword(key)) {
        return reject('unknown-keyword', locate(key), `<${key}> is not an OMM element (CCSDS 502.0-B-3 tables 4-1 to 4-3)`);
      }
      if (key === 'CCSDS_OMM_VERS') continue;
      if (Array.isArray(val)) return reject('duplicate', locate(key), `<${key}> appears more than once`);
      const loc = locate(key);
      const item: OmmItem = { value: '' };
      if (loc.line !== undefined) item.line = loc.line;
      if (loc.column !== undefined) item.column = loc.column;
      if (typeof val === 'object' && val !== null) {
        const o = val as Record<string, unknown>;
        const children = Object.keys(o).filter((k) => !k.startsWith('@_') && k !== '#text');
        if (children.length > 0) return reject('structure', loc, `<${key}> must hold a value, not elements`);
        item.value = typeof o['#text'] === 'string' ? o['#text'] : '';
        if (typeof o['@_units'] === 'string') item.unit = o['@_units'];
      } else item.value = String(val);
      items.set(key, item);
    }
    return { ok: true };
  };
  const walked = walk(rootObj, 'omm');
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
  const { messages, stray } = xmlEntries(text);
  const all = [...messages, ...stray].sort((a, b) => a.line - b.line);
  return all.map((e, i) => ({ ...e, index: i + 1 }));
}

/** Parse exactly one OMM in XML (a lone <omm>, or an <ndm> holding one). */
export function parseOmmXml(text: string): ParseResult {
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

function escapeXml(s: string): string {
  return s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;').replace(/'/g, '&apos;');
}

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
