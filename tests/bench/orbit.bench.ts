/**
 * Orbit engine figures, each measured side by side in the same run:
 *  1. ground-track samples per second: sampleTrack against a bare satellite.js
 *     propagate + gstime + eciToGeodetic loop (goal: ratio 0.8 or better);
 *  2. a 7-day pass search: findPasses against a one-second brute-force scan
 *     (goal: 20 times faster or better, with the same passes).
 * The element set is invented (a low, ISS-like orbit); the observer is an invented mid-latitude site.
 */
import { eciToGeodetic, gstime, propagate, twoline2satrec } from 'satellite.js';
import { findPasses, findPassesBruteForce, sampleTrack } from '@nadirline/shared';
import type { Pass } from '@nadirline/shared';

const LINE1 = '1 90001U 26001A   26079.00000000  .00000000  00000-0  20000-3 0  9998';
const LINE2 = '2 90001  51.6400 120.5000 0005000  80.0000 280.0000 15.50000000    11';
const EPOCH_MS = Date.UTC(2026, 2, 20);
const OBSERVER = { latDeg: 47.1, lonDeg: 8.5, altM: 400 };
const RAD = 180 / Math.PI;

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const mid = Math.floor(s.length / 2);
  return s.length % 2 ? (s[mid] as number) : ((s[mid - 1] as number) + (s[mid] as number)) / 2;
}

function timeIt(fn: () => unknown): number {
  const t0 = performance.now();
  fn();
  return performance.now() - t0;
}

function bareLoop(startMs: number, endMs: number, stepS: number): { t: number; lat: number; lon: number; altKm: number }[] {
  const satrec = twoline2satrec(LINE1, LINE2);
  const out: { t: number; lat: number; lon: number; altKm: number }[] = [];
  for (let t = startMs; t <= endMs; t += stepS * 1000) {
    const d = new Date(t);
    const pv = propagate(satrec, d);
    if (!pv) throw new Error('satellite.js propagate failed');
    const g = eciToGeodetic(pv.position, gstime(d));
    out.push({ t, lat: g.latitude * RAD, lon: g.longitude * RAD, altKm: g.height });
  }
  return out;
}

async function trackBench(): Promise<void> {
  const satrec = twoline2satrec(LINE1, LINE2);
  const startMs = EPOCH_MS;
  const endMs = EPOCH_MS + 7 * 86_400_000;
  const stepS = 10;
  let count = 0;
  const ours = (): void => {
    const r = sampleTrack(satrec, { startMs, endMs, stepS });
    if (!r.ok) throw new Error(r.message);
    count = r.samples.length;
  };
  const bare = (): void => {
    count = bareLoop(startMs, endMs, stepS).length;
  };
  ours();
  bare(); // warm up both
  const oursMs: number[] = [];
  const bareMs: number[] = [];
  for (let round = 0; round < 7; round++) {
    oursMs.push(timeIt(ours));
    bareMs.push(timeIt(bare));
  }
  const oursRate = count / (median(oursMs) / 1000);
  const bareRate = count / (median(bareMs) / 1000);
  const ratio = oursRate / bareRate;
  console.log(`track: ${count} samples (7 days at ${stepS} s), median of 7 alternating rounds`);
  console.log(`  sampleTrack (geodetic + sunlit flag)     ${Math.round(oursRate).toLocaleString('en-US').padStart(12)} samples/s`);
  console.log(`  bare satellite.js propagate+gstime+geo   ${Math.round(bareRate).toLocaleString('en-US').padStart(12)} samples/s`);
  console.log(`  ratio ${ratio.toFixed(2)} (goal >= 0.8) ${ratio >= 0.8 ? 'MET' : 'NOT MET'}`);
}

async function passBench(): Promise<void> {
  const satrec = twoline2satrec(LINE1, LINE2);
  const opts = { startMs: EPOCH_MS, days: 7, minElevationDeg: 0 };
  let fast: Pass[] = [];
  let slow: Pass[] = [];
  const runFast = (): void => {
    const r = findPasses(satrec, OBSERVER, opts);
    if (!r.ok) throw new Error(r.message);
    fast = r.passes;
  };
  const runSlow = (): void => {
    const r = findPassesBruteForce(satrec, OBSERVER, opts);
    if (!r.ok) throw new Error(r.message);
    slow = r.passes;
  };
  runFast(); // warm up
  const fastMs: number[] = [];
  for (let i = 0; i < 15; i++) fastMs.push(timeIt(runFast));
  const slowMs: number[] = [];
  for (let i = 0; i < 3; i++) slowMs.push(timeIt(runSlow));
  const f = median(fastMs);
  const s = median(slowMs);
  let worstS = 0;
  let sameVisible = fast.length === slow.length;
  fast.forEach((p, i) => {
    const q = slow[i];
    if (!q) return;
    worstS = Math.max(
      worstS,
      Math.abs(p.rise.t - q.rise.t) / 1000,
      Math.abs(p.culmination.t - q.culmination.t) / 1000,
      Math.abs(p.set.t - q.set.t) / 1000,
    );
    if (p.visible !== q.visible) sameVisible = false;
  });
  const same = fast.length === slow.length && worstS < 1;
  console.log(`passes: 7 days, observer ${OBSERVER.latDeg} N ${OBSERVER.lonDeg} E, mask 0 deg`);
  console.log(`  findPasses (coarse scan + refinement)   ${f.toFixed(1).padStart(9)} ms  ${fast.length} passes`);
  console.log(`  brute-force scan, one look a second     ${s.toFixed(1).padStart(9)} ms  ${slow.length} passes`);
  console.log(`  speed-up ${(s / f).toFixed(1)}x (goal >= 20x) ${s / f >= 20 ? 'MET' : 'NOT MET'}`);
  console.log(
    `  same passes: ${same ? 'yes' : 'NO'} (largest rise/culmination/set difference ${worstS.toFixed(3)} s; visible flags ${sameVisible ? 'agree' : 'DIFFER'})`,
  );
}

export async function run(): Promise<void> {
  await trackBench();
  await passBench();
}
