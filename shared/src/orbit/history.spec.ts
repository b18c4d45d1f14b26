/**
 * The set in force and piecewise windows (Nadirline rule: latest epoch at or before t, else the
 * earliest set), and tracks sampled across several sets. Reference vectors: AIAA 2006-6753
 * Appendix E (references.md), each at its own epoch.
 */
import { describe, expect, it } from 'vitest';
import { parseTle } from '../elements/tle.ts';
import { toSatrec } from '../elements/satrec.ts';
import { AIAA_2006_6753_CASES } from '../elements/verification-cases.ts';
import { MS_PER_DAY } from './constants.ts';
import { ageDaysAt, byEpoch, findPassesAcrossSets, indexInForce, piecewiseWindows, sampleTrackAcrossSets, setInForce } from './history.ts';
import { propagateEci } from './propagate.ts';
import { sampleTrack } from './track.ts';
import { findPasses } from './passes.ts';
import { TEST_EPOCH_MS, TEST_ORBITS } from './testing/orbits.ts';
import { synthTle } from './testing/synth-tle.ts';

const H = 3_600_000;
const sets = byEpoch([{ epochMs: 30, id: 'c' }, { epochMs: 10, id: 'a' }, { epochMs: 20, id: 'b' }]);

describe('setInForce', () => {
  it('takes the latest epoch at or before t, the earliest before every epoch, nothing without sets', () => {
    expect(sets.map((s) => s.id)).toEqual(['a', 'b', 'c']);
    expect(setInForce(sets, 5)?.id).toBe('a');
    expect(setInForce(sets, 10)?.id).toBe('a');
    expect(setInForce(sets, 19.999)?.id).toBe('a');
    expect(setInForce(sets, 20)?.id).toBe('b');
    expect(setInForce(sets, 29)?.id).toBe('b');
    expect(setInForce(sets, 1e12)?.id).toBe('c');
    expect(setInForce([], 5)).toBeUndefined();
    expect(indexInForce([], 5)).toBe(-1);
  });

  it('ageDays is negative before the epoch', () => {
    expect(ageDaysAt({ epochMs: MS_PER_DAY }, 0)).toBe(-1);
    expect(ageDaysAt({ epochMs: 0 }, MS_PER_DAY / 2)).toBe(0.5);
  });
});

describe('piecewiseWindows', () => {
  it('cuts the window at each later epoch inside it', () => {
    const parts = piecewiseWindows(sets, 15, 35);
    expect(parts.map((p) => [p.set.id, p.startMs, p.endMs])).toEqual([['a', 15, 20], ['b', 20, 30], ['c', 30, 35]]);
  });
  it('one part when no epoch falls inside, and the earliest set before every epoch', () => {
    expect(piecewiseWindows(sets, 21, 29).map((p) => p.set.id)).toEqual(['b']);
    expect(piecewiseWindows(sets, 0, 12).map((p) => [p.set.id, p.startMs, p.endMs])).toEqual([['a', 0, 12]]);
    expect(piecewiseWindows(sets, 0, 20).map((p) => p.set.id)).toEqual(['a', 'b']);
  });
  it('sets sharing an epoch give no empty part', () => {
    const twins = byEpoch([{ epochMs: 10, id: 'x' }, { epochMs: 20, id: 'y' }, { epochMs: 20, id: 'z' }]);
    expect(piecewiseWindows(twins, 0, 30).map((p) => p.set.id)).toEqual(['x', 'z']);
  });
});

describe('sampleTrackAcrossSets', () => {
  const el = TEST_ORBITS.lowInclined;
  const mk = (epochMs: number, meanAnomalyDeg: number) => {
    const r = parseTle(synthTle({ ...el, epochMs, meanAnomalyDeg }).join('\n'));
    if (!r.ok) throw new Error(r.message);
    return { epochMs: r.elementSet.epochMs, satrec: toSatrec(r.elementSet), id: String(epochMs) };
  };
  const s1 = mk(TEST_EPOCH_MS, 10);
  const s2 = mk(TEST_EPOCH_MS + 2 * H + 30_000, 50);

  it('splits where the set changes, keeps the grid, and each part comes from its own set', () => {
    const start = TEST_EPOCH_MS + H;
    const r = sampleTrackAcrossSets([s1, s2], { startMs: start, endMs: start + 2 * H, stepS: 60 });
    if (!r.ok) throw new Error(r.message);
    expect(r.parts.map((p) => p.set.id)).toEqual([s1.id, s2.id]);
    const [a, b] = r.parts;
    if (!a || !b) throw new Error('two parts expected');
    expect(a.samples.length + b.samples.length).toBe(121);
    expect((a.samples.at(-1)?.t ?? 0) < s2.epochMs).toBe(true);
    expect(b.samples[0]?.t).toBe(start + 61 * 60_000); // the new epoch is start + 60.5 min: the first grid time after it
    const only1 = sampleTrack(s1.satrec, { startMs: start, endMs: a.samples.at(-1)?.t ?? 0, stepS: 60 });
    const only2 = sampleTrack(s2.satrec, { startMs: b.samples[0]?.t ?? 0, endMs: start + 2 * H, stepS: 60 });
    if (!only1.ok || !only2.ok) throw new Error('sampleTrack failed');
    expect(a.samples).toEqual(only1.samples);
    expect(b.samples).toEqual(only2.samples);
  });

  it('answers too-far-from-epoch relative to the set in force, not to now', () => {
    const far = s1.epochMs - 366 * MS_PER_DAY;
    const r = sampleTrackAcrossSets([s1, s2], { startMs: far, endMs: far + H, stepS: 60 });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.code).toBe('too-far-from-epoch');
    const near = s2.epochMs + 364 * MS_PER_DAY;
    expect(sampleTrackAcrossSets([s1, s2], { startMs: near, endMs: near + H, stepS: 60 }).ok).toBe(true);
  });

  it('AIAA 2006-6753 reference vectors at their own epochs through the set in force', () => {
    // Appendix E rows (references.md); the four sets span 1980-2006, so each time picks its own set.
    const stored = byEpoch(
      AIAA_2006_6753_CASES.map((c) => {
        const r = parseTle(`${c.line1}\n${c.line2}`);
        if (!r.ok) throw new Error(r.message);
        return { epochMs: r.elementSet.epochMs, satrec: toSatrec(r.elementSet), c };
      }),
    );
    for (const c of AIAA_2006_6753_CASES) {
      for (const st of c.states) {
        const own = stored.find((s) => s.c === c);
        if (!own) throw new Error('missing');
        const t = own.epochMs + st.tsinceMin * 60_000;
        const inForce = setInForce(stored, t);
        expect(inForce?.c.catalog).toBe(c.catalog);
        const p = propagateEci(inForce?.satrec ?? own.satrec, t, inForce?.epochMs);
        if (!p.ok) throw new Error(p.message);
        expect(p.position.x).toBeCloseTo(st.r[0], 5);
        expect(p.position.y).toBeCloseTo(st.r[1], 5);
        expect(p.position.z).toBeCloseTo(st.r[2], 5);
        expect(p.velocity.x).toBeCloseTo(st.v[0], 8);
      }
    }
  });
});

describe('findPassesAcrossSets', () => {
  const observer = { latDeg: 47.1, lonDeg: 8.5, altM: 400 };
  const r = parseTle(synthTle(TEST_ORBITS.lowInclined).join('\n'));
  if (!r.ok) throw new Error(r.message);
  const satrec = toSatrec(r.elementSet);
  const opts = { startMs: TEST_EPOCH_MS, days: 2, minElevationDeg: 10 };
  const single = findPasses(satrec, observer, opts);
  if (!single.ok) throw new Error(single.message);

  it('gives the single-set passes when the window is cut, a pass cut at a set change joined again', () => {
    // The same orbit under two labels, the second "epoch" in the middle of the second pass:
    // the cut must not change the passes (a pass under way at the cut is joined).
    const second = single.passes[1];
    if (!second) throw new Error('needs two passes');
    const cut = (second.rise.t + second.set.t) / 2;
    const sets = [{ epochMs: TEST_EPOCH_MS, satrec, id: 'a' }, { epochMs: cut, satrec, id: 'b' }];
    const across = findPassesAcrossSets(sets, observer, opts);
    if (!across.ok) throw new Error(across.message);
    expect(across.sets.map((s) => s.id)).toEqual(['a', 'b']);
    expect(across.passes).toHaveLength(single.passes.length);
    across.passes.forEach((p, i) => {
      const q = single.passes[i];
      expect(Math.abs(p.rise.t - (q?.rise.t ?? 0))).toBeLessThan(100);
      expect(Math.abs(p.set.t - (q?.set.t ?? 0))).toBeLessThan(100);
      expect(p.culmination.elevationDeg).toBeCloseTo(q?.culmination.elevationDeg ?? 0, 1);
      expect(p.inProgressAtStart).toBe(false);
    });
    expect(across.passes[1]?.inForce.id).toBe('a');
    expect(across.passes[2]?.inForce.id).toBe('b');
  });
});
