import { json2satrec, propagate, sgp4, twoline2satrec } from 'satellite.js';
import type { SatRec } from 'satellite.js';
import { describe, expect, it } from 'vitest';
import type { ElementSet, ParseResult } from '../types.ts';
import { parseOmmJson, toOmmJson } from './omm-json.ts';
import { parseOmmKvn, toOmmKvn } from './omm-kvn.ts';
import { parseOmmXml, toOmmXml } from './omm-xml.ts';
import { toSatrec } from './satrec.ts';
import { parseTle } from './tle.ts';
import { AIAA_2006_6753_CASES } from './verification-cases.ts';

function accepted(r: ParseResult): ElementSet {
  if (!r.ok) throw new Error(`expected an accepted set, got: ${r.message}`);
  return r.elementSet;
}

function state(satrec: SatRec, tsinceMin: number): { r: number[]; v: number[] } {
  const pv = sgp4(satrec, tsinceMin);
  if (!pv) throw new Error(`SGP4 gave no state at ${tsinceMin} min (error ${satrec.error})`);
  return { r: [pv.position.x, pv.position.y, pv.position.z], v: [pv.velocity.x, pv.velocity.y, pv.velocity.z] };
}

function distance(a: number[], b: number[]): number {
  return Math.hypot(...a.map((x, i) => x - (b[i] ?? NaN)));
}

const CREATED = { creationDate: '2026-01-01T00:00:00' };

describe('toSatrec reproduces AIAA 2006-6753 Appendix E through our own parser', () => {
  for (const c of AIAA_2006_6753_CASES) {
    for (const s of c.states) {
      it(`matches case ${c.catalog} (${c.what}) at ${s.tsinceMin} min to 1e-6 km and 1e-9 km/s`, () => {
        const es = accepted(parseTle(`${c.line1}\n${c.line2}`));
        const got = state(toSatrec(es), s.tsinceMin);
        got.r.forEach((x, i) => expect(Math.abs(x - (s.r[i] ?? NaN))).toBeLessThan(1e-6));
        got.v.forEach((x, i) => expect(Math.abs(x - (s.v[i] ?? NaN))).toBeLessThan(1e-9));
      });
    }
  }
});

describe('OMM twins of the AIAA 2006-6753 cases agree with the TLE within 1 m', () => {
  const writers: [string, (es: ElementSet) => ParseResult][] = [
    ['KVN', (es) => parseOmmKvn(toOmmKvn(es, CREATED))],
    ['XML', (es) => parseOmmXml(toOmmXml(es, CREATED))],
    ['JSON text', (es) => parseOmmJson(JSON.stringify(toOmmJson(es, CREATED)))],
    ['JSON object', (es) => parseOmmJson(toOmmJson(es, CREATED))],
  ];
  for (const c of AIAA_2006_6753_CASES) {
    for (const [format, roundTrip] of writers) {
      it(`holds for case ${c.catalog} through OMM ${format} from -1440 to 1440 min`, () => {
        const es = accepted(parseTle(`${c.line1}\n${c.line2}`));
        const twin = accepted(roundTrip(es));
        expect(twin.epochIso).toBe(es.epochIso);
        const a = toSatrec(es);
        const b = toSatrec(twin);
        for (const t of [-1440, 0, 360, 720, 1440]) {
          const sa = state(a, t);
          const sb = state(b, t);
          expect(distance(sa.r, sb.r)).toBeLessThan(0.001);
        }
      });
    }
  }
});

describe('toSatrec avoids the json2satrec traps of references.md', () => {
  const c = AIAA_2006_6753_CASES[0] as (typeof AIAA_2006_6753_CASES)[number];
  const es = accepted(parseTle(`${c.line1}\n${c.line2}`));

  it('propagates an ordinal-day epoch that makes satellite.js json2satrec give NaN', () => {
    const json = { ...toOmmJson(es, CREATED), EPOCH: '2000-179T18:50:19.733568' };
    // The trap itself (satellite.js 7.1.0): no error, a NaN epoch, so NaN positions at any date.
    const naive = json2satrec(json as Parameters<typeof json2satrec>[0]);
    expect(naive.jdsatepoch).toBeNaN();
    const at = propagate(naive, new Date(Date.UTC(2000, 5, 28)));
    expect(at === null || Number.isNaN(at.position.x)).toBe(true);
    const ours = accepted(parseOmmJson(json));
    expect(ours.epochIso).toBe(es.epochIso);
    const got = state(toSatrec(ours), 0);
    expect(distance(got.r, c.states[0]?.r ?? [])).toBeLessThan(1e-6);
  });

  it('keeps the epoch to the microsecond where json2satrec cuts it to whole milliseconds', () => {
    const naive = json2satrec(toOmmJson(es, CREATED) as Parameters<typeof json2satrec>[0]);
    const ours = toSatrec(es);
    const tle = twoline2satrec(c.line1, c.line2);
    const usPerDay = 86_400_000_000;
    // 0.568 ms of the epoch is lost by the plain call...
    expect(Math.abs(naive.jdsatepoch - tle.jdsatepoch) * usPerDay).toBeGreaterThan(500);
    // ...and kept here, to the resolution of a Julian date in a double (about 40 us).
    expect(Math.abs(ours.jdsatepoch - tle.jdsatepoch) * usPerDay).toBeLessThan(50);
    expect(ours.epochdays).toBeCloseTo(179.78495062, 10);
    expect(ours.epochyr).toBe(0);
  });

  it('stays within a micrometre-scale bound of satellite.js twoline2satrec on every case for three days', () => {
    for (const k of AIAA_2006_6753_CASES) {
      const ours = toSatrec(accepted(parseTle(`${k.line1}\n${k.line2}`)));
      const ref = twoline2satrec(k.line1, k.line2);
      for (const t of [0, 1440, 4320]) {
        // Measured at most about 5e-8 km on the deep-space cases (rounded epoch in init only).
        expect(distance(state(ours, t).r, state(ref, t).r)).toBeLessThan(1e-6);
      }
    }
  });
});
