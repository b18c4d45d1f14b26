/** Searching and sorting the satellites list. */
import type { SatelliteListItem } from '../api/types.ts';

export type SatelliteSortKey = 'name' | 'catalog' | 'epoch' | 'age' | 'period' | 'inclination';
export type SortDir = 'asc' | 'desc';

const catalogOf = (s: SatelliteListItem) => s.catalogNumber || s.current?.catalogNumber || '';

/** Satellites whose name or catalog number contains every word of the query (any case). */
export function searchSatellites(list: readonly SatelliteListItem[], query: string): SatelliteListItem[] {
  const words = query.trim().toLowerCase().split(/\s+/).filter(Boolean);
  if (!words.length) return [...list];
  return list.filter((s) => {
    const hay = `${s.name} ${catalogOf(s)}`.toLowerCase();
    return words.every((w) => hay.includes(w));
  });
}

function value(s: SatelliteListItem, key: SatelliteSortKey): string | number | null {
  switch (key) {
    case 'name':
      return s.name.toLowerCase();
    case 'catalog':
      return catalogOf(s) || null;
    case 'epoch':
      return s.current ? Date.parse(s.current.epoch) : null;
    case 'age':
      return s.current?.ageDays ?? null;
    case 'period':
      return s.derived?.periodMin ?? null;
    case 'inclination':
      return s.derived?.inclinationDeg ?? null;
  }
}

/** Sorted by a column; satellites without a value (no element set yet) come last either way. */
export function sortSatellites(list: readonly SatelliteListItem[], key: SatelliteSortKey, dir: SortDir): SatelliteListItem[] {
  const sign = dir === 'asc' ? 1 : -1;
  return [...list].sort((a, b) => {
    const va = value(a, key);
    const vb = value(b, key);
    if (va === null || vb === null) return va === vb ? a.name.localeCompare(b.name) : va === null ? 1 : -1;
    const c = typeof va === 'number' && typeof vb === 'number' ? va - vb : String(va).localeCompare(String(vb), 'en', { numeric: true });
    return c !== 0 ? sign * c : a.name.localeCompare(b.name);
  });
}
