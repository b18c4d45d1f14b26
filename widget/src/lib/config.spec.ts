import { describe, expect, it } from 'vitest';
import { parseObserver, settle } from './config.ts';

describe('settle', () => {
  it('uses Equal Earth, one orbit either side, every layer and the light theme by default', () => {
    const s = settle({ satellites: 'a, b  c' });
    expect(s.satellites).toEqual(['a', 'b', 'c']);
    expect(s.projection).toBe('equal-earth');
    expect([s.orbitsBehind, s.orbitsAhead]).toEqual([1, 1]);
    expect([...s.layers].sort()).toEqual(['footprint', 'graticule', 'labels', 'passes', 'terminator']);
    expect(s.theme).toBe('light');
  });

  it('lets attributes on the element win over a saved embed, and the embed over defaults', () => {
    const embed = {
      id: 'e1',
      satellites: ['x', 'y'],
      options: { projection: 'globe', orbitsAhead: 2, theme: 'dark', layers: ['footprint'], timeZone: 'Asia/Tokyo' },
    };
    const s = settle({ theme: 'auto', orbitsAhead: '' }, embed);
    expect(s.satellites).toEqual(['x', 'y']);
    expect(s.projection).toBe('globe');
    expect(s.orbitsAhead).toBe(2);
    expect(s.theme).toBe('auto');
    expect([...s.layers]).toEqual(['footprint']);
    expect(s.timeZone).toBe('Asia/Tokyo');
  });

  it('keeps orbit counts between 0 and 5 and ignores unknown layer names', () => {
    const s = settle({ orbitsBehind: 40, orbitsAhead: -1, layers: 'labels, sparkles' });
    expect([s.orbitsBehind, s.orbitsAhead]).toEqual([5, 0]);
    expect([...s.layers]).toEqual(['labels']);
  });
});

describe('parseObserver', () => {
  it('reads lat,lon and an optional altitude in metres', () => {
    expect(parseObserver('52.2, 0.12')).toEqual({ lat: 52.2, lon: 0.12, altM: 0 });
    expect(parseObserver('-33.9,151.2,58')).toEqual({ lat: -33.9, lon: 151.2, altM: 58 });
  });
  it('knows auto and rejects places off the Earth', () => {
    expect(parseObserver('auto')).toBe('auto');
    expect(parseObserver('95,10')).toBeNull();
    expect(parseObserver('here')).toBeNull();
    expect(parseObserver({ lat: 10, lon: 20 })).toEqual({ lat: 10, lon: 20, altM: 0 });
  });
});

describe('observer name', () => {
  it('takes a trimmed place name from the attribute, then from the saved embed, and none when blank', () => {
    expect(settle({ observer: '51.4,-2.4', observerName: '  Ostwick   Hall ' }).observerName).toBe('Ostwick Hall');
    expect(settle({}, { id: 'e', satellites: [], options: { observerName: 'Roof terrace' } }).observerName).toBe('Roof terrace');
    expect(settle({ observerName: '   ' }).observerName).toBeUndefined();
    expect(settle({ observerName: 'x'.repeat(200) }).observerName).toHaveLength(60);
  });
});
