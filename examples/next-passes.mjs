#!/usr/bin/env node
/**
 * Print the next passes of your satellites over a place, using the Nadirline /v1 API with a
 * server key (keep server keys out of web pages; this script runs on your own machine or backend).
 *
 *   NADIRLINE_KEY=nls_... node examples/next-passes.mjs 51.2885 -2.4301 [satellite-id ...] [--days 2] [--min-elevation 10]
 *
 * Environment: NADIRLINE_KEY (required), NADIRLINE_API (default http://localhost:8080).
 * Times are printed in this machine’s time zone (set TZ to change it). A satellite the API refuses
 * (unknown, decayed, no element set) is reported and the others still print; the exit code is 1
 * only when none could be printed.
 */
const api = (process.env.NADIRLINE_API || 'http://localhost:8080').replace(/\/+$/, '');
const key = process.env.NADIRLINE_KEY;

const args = process.argv.slice(2);
const flag = (name, fallback) => {
  const i = args.indexOf(`--${name}`);
  if (i < 0) return fallback;
  const v = args[i + 1];
  args.splice(i, 2);
  return v;
};
const days = Number(flag('days', '2'));
const minElevation = Number(flag('min-elevation', '10'));
const [latText, lonText, ...ids] = args;
const lat = Number(latText);
const lon = Number(lonText);

if (!key || !Number.isFinite(lat) || !Number.isFinite(lon)) {
  console.error('usage: NADIRLINE_KEY=nls_... node examples/next-passes.mjs LAT LON [SATELLITE_ID ...] [--days N] [--min-elevation DEG]');
  process.exit(2);
}

/** GET a /v1 path; problem+json answers become an Error with their words. */
async function get(path, query = {}) {
  const url = new URL(`${api}/v1/${path}`);
  for (const [k, v] of Object.entries(query)) url.searchParams.set(k, String(v));
  let res;
  try {
    res = await fetch(url, { headers: { authorization: `Bearer ${key}`, accept: 'application/json' } });
  } catch (e) {
    throw new Error(`cannot reach ${api}: ${e.cause?.code ?? e.cause?.errors?.[0]?.code ?? e.message}`);
  }
  const body = await res.json().catch(() => ({}));
  if (!res.ok) throw new Error(`${res.status} ${body.code ?? ''}: ${body.detail || body.title || res.statusText}`);
  return body;
}

const COMPASS = ['N', 'NE', 'E', 'SE', 'S', 'SW', 'W', 'NW'];
const compass = (az) => COMPASS[Math.round((((az % 360) + 360) % 360) / 45) % 8];
const when = new Intl.DateTimeFormat(undefined, { weekday: 'short', hour: '2-digit', minute: '2-digit' });
const clock = new Intl.DateTimeFormat(undefined, { hour: '2-digit', minute: '2-digit', second: '2-digit' });
const zone = Intl.DateTimeFormat().resolvedOptions().timeZone;

/** One satellite's passes, printed; throws (with the API's words) when the API refuses. */
async function printPasses(s, start) {
  const age = s.derived ? ` · element set ${s.derived.ageDays.toFixed(1)} days old${s.derived.stale ? ' (STALE)' : ''}` : '';
  console.log(`${s.name} (${s.id})${age}`);
  const r = await get(`satellites/${encodeURIComponent(s.id)}/passes`, { lat, lon, altM: 0, start, days, minElevation });
  if (r.alwaysUp) console.log(`  above ${minElevation}° for the whole window`);
  else if (r.passes.length === 0) console.log('  no passes');
  for (const p of r.passes) {
    const rise = new Date(p.rise.t);
    const top = new Date(p.culmination.t);
    const set = new Date(p.set.t);
    // a pass cut by the window has no true rise (start) or set (end): say so, do not print the cut as one
    const from = p.inProgressAtStart ? `already up at ${when.format(rise)}` : `${when.format(rise)}  rise ${compass(p.rise.azimuth).padEnd(2)}`;
    const cut = p.inProgressAtStart || p.inProgressAtEnd;
    const highest = `${cut ? 'highest in window' : 'highest'} ${clock.format(top)} ${p.culmination.elevation.toFixed(0).padStart(2)}° ${compass(p.culmination.azimuth).padEnd(2)}`;
    const to = p.inProgressAtEnd
      ? `still up at ${clock.format(set)} when the window ends`
      : `set ${clock.format(set)} ${compass(p.set.azimuth).padEnd(2)}${cut ? '' : `  ${((set - rise) / 60000).toFixed(1)} min`}`;
    console.log(`  ${from}  ${highest}  ${to}${p.visible ? '  visible' : ''}`);
  }
}

let satellites;
try {
  if (ids.length) {
    // each id on its own, so one unknown id does not hide the others
    satellites = [];
    for (const id of ids) {
      try {
        satellites.push(await get(`satellites/${encodeURIComponent(id)}`));
      } catch (e) {
        satellites.push({ id, failed: e.message });
      }
    }
  } else satellites = (await get('satellites')).satellites;
} catch (e) {
  console.error(`next-passes: ${e.message}`);
  process.exit(1);
}
if (satellites.length === 0) console.log('This key sees no satellites yet.');
const start = new Date().toISOString();
console.log(`Passes above ${minElevation}° over ${lat}, ${lon} for the next ${days} day(s), times in ${zone}`);
console.log(`(rise and set are when a satellite climbs above ${minElevation}° and sinks below it, not the horizon)\n`);
let failed = 0;
for (const s of satellites) {
  try {
    if (s.failed) throw new Error(s.failed);
    await printPasses(s, start);
  } catch (e) {
    // say what went wrong for this one and go on with the rest
    failed++;
    if (s.failed) console.log(s.id);
    console.log(`  could not get passes: ${e.message}`);
    console.error(`next-passes: ${s.name ?? s.id}: ${e.message}`);
  }
  console.log('');
}
console.log('Positions from mean element sets and SGP4: good to kilometres near epoch, worse as sets age. Never point optics at or near the Sun.');
// non-zero only when nothing could be shown at all
if (satellites.length > 0 && failed === satellites.length) process.exit(1);
