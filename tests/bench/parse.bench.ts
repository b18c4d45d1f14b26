/**
 * Element-set parsing of hostile texts (2 MiB each, the upload limit), read with the upload cap
 * of 500 entries as the server reads them, next to the baseline measured in the same run: the
 * largest legitimate upload, 500 OMM XML messages in one <ndm> (about 1.3 MB).
 * Figures are CPU time of this process (what the event loop is blocked for), best of 3.
 * Goal: the worst hostile shape well under 1 s (below 1000 ms), its ratio to the baseline printed.
 * Before the parsers read in one pass, '<omm>' x 60,000 took 11.4 s and a 256 KiB line of blanks
 * 29 s; a 2 MiB line of blanks would have taken about half an hour.
 */
import { fromKeplerian, readElementSets, toNdmXml, type ElementSet } from '@nadirline/shared';
import { HOSTILE_SHAPES } from '@nadirline/shared/testing';

const CAP = 500;
const ROUNDS = 3;

function cpuMs(fn: () => unknown): number {
  const before = process.cpuUsage();
  fn();
  const d = process.cpuUsage(before);
  return (d.user + d.system) / 1000;
}

const best = (fn: () => unknown) => Math.min(...Array.from({ length: ROUNDS }, () => cpuMs(fn)));

/** 500 invented element sets, one a day, as a pipeline's backfill upload would hold. */
function legitimateSets(): ElementSet[] {
  const sets: ElementSet[] = [];
  for (let i = 0; i < CAP; i++) {
    const r = fromKeplerian({
      epoch: new Date(Date.UTC(2026, 0, 1) + i * 86_400_000).toISOString(),
      name: 'BENCH SAT',
      catalogNumber: '90001',
      semiMajorAxisKm: 6878 + (i % 7),
      eccentricity: 0.0011,
      inclinationDeg: 97.4,
      raanDeg: (i * 0.9856) % 360,
      argPerigeeDeg: 90,
      meanAnomalyDeg: (i * 37) % 360,
    });
    if (!r.ok) throw new Error(`bench set refused: ${r.message}`);
    sets.push(r.elementSet);
  }
  return sets;
}

export async function run(): Promise<void> {
  const ndm = toNdmXml(legitimateSets());
  const check = readElementSets(ndm, { maxEntries: CAP });
  if (!check.ok || check.entries.length !== CAP || check.entries.some((e) => !e.result.ok)) throw new Error('the baseline upload did not parse as 500 good sets');
  const baseline = best(() => readElementSets(ndm, { maxEntries: CAP }));

  const rows = HOSTILE_SHAPES.map((shape) => {
    const text = shape.make();
    return { name: shape.name, chars: text.length, ms: best(() => readElementSets(text, { hint: shape.hint, maxEntries: CAP })) };
  });
  console.log(`element-set parsing, cap ${CAP} entries, CPU ms (best of ${ROUNDS})`);
  console.log(`${'text'.padEnd(56)} ${'chars'.padStart(9)} ${'ms'.padStart(8)}  ratio to baseline`);
  console.log(`${'baseline: 500 OMM XML messages in one <ndm>'.padEnd(56)} ${String(ndm.length).padStart(9)} ${baseline.toFixed(1).padStart(8)}  ${'1.00'.padStart(6)}`);
  for (const r of rows) console.log(`${r.name.slice(0, 56).padEnd(56)} ${String(r.chars).padStart(9)} ${r.ms.toFixed(1).padStart(8)}  ${(r.ms / baseline).toFixed(2).padStart(6)}`);
  const worst = rows.reduce((a, b) => (b.ms > a.ms ? b : a));
  const ratio = worst.ms / baseline;
  console.log(`worst hostile shape: ${worst.name}: ${worst.ms.toFixed(1)} ms, ${ratio.toFixed(2)} x the baseline (${baseline.toFixed(1)} ms); goal < 1000 ms: ${worst.ms < 1000 ? 'met' : 'NOT met'}`);
}
