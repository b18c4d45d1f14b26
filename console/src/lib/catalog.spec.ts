import { describe, expect, it } from 'vitest';
import type { SatelliteListItem } from '../api/types.ts';
import { catalogClashes, catalogNumbersIn, nameList, normalizeCatalog } from './catalog.ts';

const TLE = [
  'KITE-2',
  '1 99993U 26001A   26335.50000000  .00000000  00000-0  00000-0 0  9990',
  '2 99993  97.4000  41.2000 0010000  90.0000 270.0000 15.20000000    10',
].join('\n');

function sat(id: string, name: string, catalogNumber: string | null, currentCatalog?: string): SatelliteListItem {
  return {
    id,
    name,
    catalogNumber,
    description: null,
    current: currentCatalog
      ? { id: `es-${id}`, source: 'tle', epoch: '2031-01-01T00:00:00Z', ageDays: 1, staleness: 'fresh', uploadedBy: null, createdAt: '2031-01-01T00:00:00Z', catalogNumber: currentCatalog, name, continuity: null, awaitingConfirmation: false }
      : null,
    derived: null,
  };
}

describe('catalog numbers in pasted element sets', () => {
  it('reads them from TLE line 1, Alpha-5 included, and from OMM in KVN, XML and JSON', () => {
    expect(catalogNumbersIn(TLE)).toEqual(['99993']);
    expect(catalogNumbersIn('1 A0001U 26001A   26335.5 ...')).toEqual(['100001']);
    expect(catalogNumbersIn('OBJECT_NAME = X\nNORAD_CAT_ID = 00042\n')).toEqual(['42']);
    expect(catalogNumbersIn('<NORAD_CAT_ID>25544</NORAD_CAT_ID>')).toEqual(['25544']);
    expect(catalogNumbersIn('[{"NORAD_CAT_ID": 7}, {"NORAD_CAT_ID": "7"}]')).toEqual(['7']);
    expect(catalogNumbersIn('just a name')).toEqual([]);
  });

  it('compares catalog numbers without leading zeros', () => {
    expect(normalizeCatalog('00005')).toBe('5');
    expect(normalizeCatalog('Z9999')).toBe('339999');
    expect(normalizeCatalog('I0000')).toBeNull();
  });

  it('names the satellites that already hold a number, by their own number or their current set’s', () => {
    const list = [sat('a', 'Kite-2', '99993'), sat('b', 'Kite-2 spare', null, '99993'), sat('c', 'Wren', '99901')];
    expect(catalogClashes(['99993', '12345'], list)).toEqual([{ catalogNumber: '99993', satellites: [{ id: 'a', name: 'Kite-2' }, { id: 'b', name: 'Kite-2 spare' }] }]);
    expect(nameList(['Kite-2', 'Kite-2 spare', 'Wren'])).toBe('“Kite-2”, “Kite-2 spare” and “Wren”');
  });
});
