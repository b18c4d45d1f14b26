import { describe, expect, it } from 'vitest';
import type { SatelliteListItem } from '../api/types.ts';
import { searchSatellites, sortSatellites } from './satellite-list.ts';

function sat(name: string, catalogNumber: string | null, ageDays: number | null, periodMin: number | null): SatelliteListItem {
  return {
    id: name,
    name,
    catalogNumber,
    description: null,
    current: ageDays === null ? null : { id: `es-${name}`, source: 'tle', epoch: new Date(Date.UTC(2031, 0, 10) - ageDays * 86_400_000).toISOString(), ageDays, staleness: 'fresh', uploadedBy: null, createdAt: '2031-01-01T00:00:00Z', catalogNumber: catalogNumber ?? '', name, continuity: null, awaitingConfirmation: false },
    derived: periodMin === null ? null : ({ periodMin, inclinationDeg: periodMin / 2 } as SatelliteListItem['derived']),
  };
}
const list = [sat('Wren', '99901', 2, 95.1), sat('Kite-2', '99993', 0.5, 101.4), sat('Old Lark', '99990', 40, 1436), sat('New one', null, null, null)];

describe('the satellites list', () => {
  it('finds satellites by any part of the name or the catalog number, in any case', () => {
    expect(searchSatellites(list, 'kite').map((s) => s.name)).toEqual(['Kite-2']);
    expect(searchSatellites(list, '9990').map((s) => s.name)).toEqual(['Wren', 'Old Lark']);
    expect(searchSatellites(list, '  ')).toHaveLength(4);
    expect(searchSatellites(list, 'old 99990').map((s) => s.name)).toEqual(['Old Lark']);
  });

  it('sorts by a column either way, with satellites lacking the value last', () => {
    expect(sortSatellites(list, 'name', 'asc').map((s) => s.name)).toEqual(['Kite-2', 'New one', 'Old Lark', 'Wren']);
    expect(sortSatellites(list, 'age', 'asc').map((s) => s.name)).toEqual(['Kite-2', 'Wren', 'Old Lark', 'New one']);
    expect(sortSatellites(list, 'age', 'desc').map((s) => s.name)).toEqual(['Old Lark', 'Wren', 'Kite-2', 'New one']);
    expect(sortSatellites(list, 'period', 'desc').map((s) => s.name)).toEqual(['Old Lark', 'Kite-2', 'Wren', 'New one']);
    expect(sortSatellites(list, 'catalog', 'asc').map((s) => s.name)).toEqual(['Wren', 'Old Lark', 'Kite-2', 'New one']);
  });
});
