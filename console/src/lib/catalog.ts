/**
 * Catalog numbers as the console compares them: read from pasted element-set text before it is
 * sent, and matched against the satellites the organization already has. Only a warning rests on
 * this; the server parses the text for real.
 */
import type { SatelliteListItem } from '../api/types.ts';

/** Alpha-5 letters: A-Z without I and O stand for 10-33 (the same rule as shared's decodeAlpha5). */
const ALPHA5_LETTERS = 'ABCDEFGHJKLMNPQRSTUVWXYZ';

/** "25544", "00005" -> "5", "A0000" -> "100000"; null when it is no catalog number. */
export function normalizeCatalog(raw: string | number | null | undefined): string | null {
  if (raw === null || raw === undefined) return null;
  const s = String(raw).trim().toUpperCase();
  if (/^\d+$/.test(s)) return String(Number(s));
  const m = /^([A-Z])(\d{4})$/.exec(s);
  const idx = m ? ALPHA5_LETTERS.indexOf(m[1] ?? '') : -1;
  return m && idx >= 0 ? String((idx + 10) * 10_000 + Number(m[2])) : null;
}

/** Every catalog number named in a TLE (line 1) or OMM (KVN, XML or JSON) text, in order, once each. */
export function catalogNumbersIn(text: string): string[] {
  const found: string[] = [];
  const add = (raw: string | undefined) => {
    const n = normalizeCatalog(raw);
    if (n !== null && !found.includes(n)) found.push(n);
  };
  for (const line of text.split(/\r?\n/)) {
    const tle = /^1 ([0-9A-Z ]{5})[A-Z ] /.exec(line);
    if (tle) add(tle[1]?.trim());
  }
  for (const m of text.matchAll(/^\s*NORAD_CAT_ID\s*=\s*(\d+)/gm)) add(m[1]);
  for (const m of text.matchAll(/<NORAD_CAT_ID>\s*(\d+)\s*<\/NORAD_CAT_ID>/g)) add(m[1]);
  for (const m of text.matchAll(/"NORAD_CAT_ID"\s*:\s*"?(\d+)"?/g)) add(m[1]);
  return found;
}

export interface CatalogClash {
  catalogNumber: string;
  satellites: Pick<SatelliteListItem, 'id' | 'name'>[];
}

/** The satellites already holding one of `numbers` (by their own catalog number or their current set's). */
export function catalogClashes(numbers: readonly string[], list: readonly SatelliteListItem[]): CatalogClash[] {
  const out: CatalogClash[] = [];
  for (const n of numbers) {
    const holders = list.filter((s) => normalizeCatalog(s.catalogNumber ?? s.current?.catalogNumber) === n);
    if (holders.length) out.push({ catalogNumber: n, satellites: holders.map((s) => ({ id: s.id, name: s.name })) });
  }
  return out;
}

/** "“Kite-2” and “Kite-2 spare”" */
export function nameList(names: readonly string[]): string {
  const q = names.map((n) => `“${n}”`);
  return q.length <= 1 ? (q[0] ?? '') : `${q.slice(0, -1).join(', ')} and ${q.at(-1)}`;
}
