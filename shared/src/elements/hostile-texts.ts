/**
 * Texts of 2 MiB shaped to make an element-set parser slow: the unit tests (hostile.spec.ts) and
 * the benchmark (tests/bench/parse.bench.ts, through '@nadirline/shared/testing') read them.
 * Test data only; not part of the engine's entry point.
 */
import type { ElementSetSource } from '../types.ts';

/** Each text is about this long: the server's upload limit (2 MiB). */
export const HOSTILE_TEXT_CHARS = 2 * 1024 * 1024;
const SIZE = HOSTILE_TEXT_CHARS;

/** `unit` repeated to fill SIZE characters. */
const fill = (unit: string, head = '', tail = '') => head + unit.repeat(Math.floor((SIZE - head.length - tail.length) / unit.length)) + tail;

export interface HostileShape {
  name: string;
  /** Builds the text (about 2 MiB; built on demand so a list of them holds no memory). */
  make: () => string;
  hint?: ElementSetSource;
  /** true: more entries than the cap; false: few entries, each refused with a reason. */
  overCap: boolean;
}

export const HOSTILE_SHAPES: HostileShape[] = [
  { name: "'<omm>' repeated (application/xml)", make: () => fill('<omm>'), hint: 'omm-xml', overCap: true },
  { name: "'<omm>' repeated, format detected", make: () => fill('<omm>'), overCap: true },
  { name: "'x\\n' repeated (text/plain)", make: () => fill('x\n'), overCap: true },
  { name: 'blank lines, then one word (format detected)', make: () => fill('\n', '', 'x'), overCap: false },
  { name: 'one line of blanks, then one word (TLE)', make: () => fill(' ', '', 'x'), hint: 'tle', overCap: false },
  { name: 'one line of blanks, then one word (format detected)', make: () => fill(' ', '', 'x'), overCap: false },
  { name: 'KVN version line, then a line of blanks', make: () => fill(' ', 'CCSDS_OMM_VERS = 3.0\n', 'x'), hint: 'omm-kvn', overCap: false },
  { name: 'KVN version lines repeated', make: () => fill('CCSDS_OMM_VERS = 3.0\n'), hint: 'omm-kvn', overCap: true },
  { name: 'TLE line-1 starts repeated', make: () => fill('1 00005U\n'), overCap: true },
  { name: 'JSON array of empty objects', make: () => fill('{},', '[', '{}]'), hint: 'omm-json', overCap: true },
  { name: 'JSON array of numbers', make: () => fill('1,', '[', '1]'), hint: 'omm-json', overCap: true },
  { name: 'JSON object with many keys', make: () => `{${Array.from({ length: SIZE / 12 }, (_, i) => `"k${i}":1`).join(',')}}`, hint: 'omm-json', overCap: false },
  { name: 'Keplerian JSON array of empty objects', make: () => fill('{},', '[', '{}]'), hint: 'kepler', overCap: true },
  { name: 'XML: text pieces between comments in one <omm>', make: () => fill('x<!---->', '<omm version="3.0">', '</omm>'), hint: 'omm-xml', overCap: false },
  { name: 'XML: CDATA pieces in one element', make: () => fill('<![CDATA[ ]]>', '<omm version="3.0"><header>', '</header></omm>'), hint: 'omm-xml', overCap: false },
  { name: 'XML: one start tag with many attributes', make: () => `<omm ${Array.from({ length: SIZE / 9 }, (_, i) => `a${i}="1"`).join(' ')}/>`, hint: 'omm-xml', overCap: false },
  { name: 'XML: deep nesting', make: () => `<omm version="3.0">${'<header>'.repeat(SIZE / 17)}${'</header>'.repeat(SIZE / 17)}</omm>`, hint: 'omm-xml', overCap: false },
  { name: 'XML: many sibling elements', make: () => fill('<COMMENT/>', '<omm version="3.0"><header>', '</header></omm>'), hint: 'omm-xml', overCap: false },
  { name: 'XML: stray lines after one <omm>', make: () => fill('x\n', '<omm version="3.0"></omm>\n'), hint: 'omm-xml', overCap: true },
  { name: 'XML: unclosed comments', make: () => fill('<!--'), hint: 'omm-xml', overCap: false },
  { name: 'XML: unclosed attribute value', make: () => fill('x', '<omm a="'), hint: 'omm-xml', overCap: false },
  { name: 'XML: close tags without opens', make: () => fill('</omm>'), hint: 'omm-xml', overCap: false },
];

