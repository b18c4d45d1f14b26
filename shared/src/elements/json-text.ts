/**
 * A small JSON reader (RFC 8259) that keeps where each value starts and the exact text of each
 * number, so errors can name a line and column and decimals are read exactly as written.
 * JSON.parse in Node 20 reports no position for a syntax error, hence this reader.
 */

export type JsonNode =
  | { kind: 'object'; start: number; entries: { key: string; keyStart: number; value: JsonNode }[] }
  | { kind: 'array'; start: number; items: JsonNode[] }
  | { kind: 'string'; start: number; value: string }
  | { kind: 'number'; start: number; raw: string }
  | { kind: 'literal'; start: number; value: boolean | null };

export type JsonRead<T> = { ok: true; value: T } | { ok: false; offset: number; reason: string };

/** Nesting deeper than this is refused (element sets are one or two levels deep). */
const MAX_DEPTH = 64;
const NUMBER = /-?(?:0|[1-9]\d*)(?:\.\d+)?(?:[eE][+-]?\d+)?/y;

class Reader {
  pos = 0;
  constructor(readonly text: string) {}

  skipSpace(): void {
    const t = this.text;
    while (this.pos < t.length) {
      const c = t.charCodeAt(this.pos);
      if (c === 32 || c === 9 || c === 10 || c === 13 || (c === 0xfeff && this.pos === 0)) this.pos++;
      else break;
    }
  }

  fail(reason: string, offset = this.pos): { ok: false; offset: number; reason: string } {
    return { ok: false, offset, reason };
  }

  describe(offset = this.pos): string {
    if (offset >= this.text.length) return 'the end of the text';
    const c = this.text[offset] ?? '';
    return `"${c}"`;
  }

  value(depth: number): JsonRead<JsonNode> {
    if (depth > MAX_DEPTH) return this.fail(`nesting deeper than ${MAX_DEPTH} levels`);
    this.skipSpace();
    const start = this.pos;
    const c = this.text[this.pos];
    if (c === '{') return this.object(depth);
    if (c === '[') return this.array(depth);
    if (c === '"') {
      const s = this.string();
      return s.ok ? { ok: true, value: { kind: 'string', start, value: s.value } } : s;
    }
    for (const [word, value] of [['true', true], ['false', false], ['null', null]] as const) {
      if (this.text.startsWith(word, this.pos)) {
        this.pos += word.length;
        return { ok: true, value: { kind: 'literal', start, value } };
      }
    }
    NUMBER.lastIndex = this.pos;
    const m = NUMBER.exec(this.text);
    if (m && m[0] !== '' && m[0] !== '-') {
      this.pos += m[0].length;
      return { ok: true, value: { kind: 'number', start, raw: m[0] } };
    }
    return this.fail(`expected a value, found ${this.describe()}`);
  }

  string(): JsonRead<string> {
    const t = this.text;
    const start = this.pos;
    this.pos++; // opening quote
    let out = '';
    let from = this.pos;
    while (this.pos < t.length) {
      const c = t.charCodeAt(this.pos);
      if (c === 34) {
        out += t.slice(from, this.pos);
        this.pos++;
        return { ok: true, value: out };
      }
      if (c < 0x20) return this.fail('control character inside a string');
      if (c === 92) {
        out += t.slice(from, this.pos);
        const e = t[this.pos + 1];
        const simple: Record<string, string> = { '"': '"', '\\': '\\', '/': '/', b: '\b', f: '\f', n: '\n', r: '\r', t: '\t' };
        if (e !== undefined && simple[e] !== undefined) {
          out += simple[e];
          this.pos += 2;
        } else if (e === 'u' && /^[0-9a-fA-F]{4}$/.test(t.slice(this.pos + 2, this.pos + 6))) {
          out += String.fromCharCode(parseInt(t.slice(this.pos + 2, this.pos + 6), 16));
          this.pos += 6;
        } else return this.fail('invalid escape in a string');
        from = this.pos;
        continue;
      }
      this.pos++;
    }
    return this.fail('string is not closed', start);
  }

  object(depth: number): JsonRead<JsonNode> {
    const start = this.pos;
    this.pos++;
    const entries: { key: string; keyStart: number; value: JsonNode }[] = [];
    this.skipSpace();
    if (this.text[this.pos] === '}') {
      this.pos++;
      return { ok: true, value: { kind: 'object', start, entries } };
    }
    for (;;) {
      this.skipSpace();
      if (this.text[this.pos] !== '"') return this.fail(`expected a key in double quotes, found ${this.describe()}`);
      const keyStart = this.pos;
      const key = this.string();
      if (!key.ok) return key;
      this.skipSpace();
      if (this.text[this.pos] !== ':') return this.fail(`expected ":" after the key, found ${this.describe()}`);
      this.pos++;
      const v = this.value(depth + 1);
      if (!v.ok) return v;
      entries.push({ key: key.value, keyStart, value: v.value });
      this.skipSpace();
      const c = this.text[this.pos];
      if (c === ',') {
        this.pos++;
        continue;
      }
      if (c === '}') {
        this.pos++;
        return { ok: true, value: { kind: 'object', start, entries } };
      }
      return this.fail(`expected "," or "}", found ${this.describe()}`);
    }
  }

  array(depth: number): JsonRead<JsonNode> {
    const start = this.pos;
    this.pos++;
    const items: JsonNode[] = [];
    this.skipSpace();
    if (this.text[this.pos] === ']') {
      this.pos++;
      return { ok: true, value: { kind: 'array', start, items } };
    }
    for (;;) {
      const v = this.value(depth + 1);
      if (!v.ok) return v;
      items.push(v.value);
      this.skipSpace();
      const c = this.text[this.pos];
      if (c === ',') {
        this.pos++;
        continue;
      }
      if (c === ']') {
        this.pos++;
        return { ok: true, value: { kind: 'array', start, items } };
      }
      return this.fail(`expected "," or "]", found ${this.describe()}`);
    }
  }
}

/** Read one JSON document. */
export function readJson(text: string): JsonRead<JsonNode> {
  const r = new Reader(text);
  const v = r.value(0);
  if (!v.ok) return v;
  r.skipSpace();
  if (r.pos < text.length) return r.fail(`unexpected ${r.describe()} after the JSON value`);
  return v;
}

/**
 * Read a JSON document whose top level is an array, one element at a time: elements before a
 * syntax error are kept, and the error is reported at its place. Reading stops after `limit`
 * elements (what follows them is not read).
 */
export function readJsonArrayItems(text: string, limit = Infinity): { items: JsonNode[]; error?: { offset: number; reason: string } } {
  const r = new Reader(text);
  r.skipSpace();
  if (text[r.pos] !== '[') {
    const v = readJson(text);
    return v.ok ? { items: [v.value] } : { items: [], error: { offset: v.offset, reason: v.reason } };
  }
  r.pos++;
  const items: JsonNode[] = [];
  r.skipSpace();
  if (text[r.pos] === ']') {
    r.pos++;
  } else {
    for (;;) {
      const v = r.value(1);
      if (!v.ok) return { items, error: { offset: v.offset, reason: v.reason } };
      items.push(v.value);
      if (items.length >= limit) return { items };
      r.skipSpace();
      const c = text[r.pos];
      if (c === ',') {
        r.pos++;
        continue;
      }
      if (c === ']') {
        r.pos++;
        break;
      }
      return { items, error: { offset: r.pos, reason: `expected "," or "]", found ${r.describe()}` } };
    }
  }
  r.skipSpace();
  if (r.pos < text.length) return { items, error: { offset: r.pos, reason: `unexpected ${r.describe()} after the JSON array` } };
  return { items };
}

/** Plain JavaScript value of a node (numbers through Number(), as JSON.parse would give). */
export function plainJson(node: JsonNode): unknown {
  switch (node.kind) {
    case 'object': {
      const o: Record<string, unknown> = {};
      // defineProperty, so a key named "__proto__" stays a plain key.
      for (const e of node.entries) {
        Object.defineProperty(o, e.key, { value: plainJson(e.value), enumerable: true, writable: true, configurable: true });
      }
      return o;
    }
    case 'array':
      return node.items.map(plainJson);
    case 'string':
      return node.value;
    case 'number':
      return Number(node.raw);
    case 'literal':
      return node.value;
  }
}
