/**
 * Text serialization of /v1 answers: times, rounded numbers, track points and the track's GeoJSON.
 * Track answers are built as text: a one-orbit track is about a hundred points, and an object
 * plus a Date and toISOString per point cost more than the SGP4 work (CPU profile of the bench).
 */
import type { TrackSample, trackToGeoJSON } from '@nadirline/shared';

export const iso = (ms: number) => new Date(ms).toISOString();
export const round = (v: number, digits: number) => {
  const f = 10 ** digits;
  return Math.round(v * f) / f;
};

const PAD2 = Array.from({ length: 100 }, (_, i) => (i < 10 ? `0${i}` : String(i)));
const DAY_MS = 86_400_000;
let isoDay = Number.NaN;
let isoDayText = '';

/** The same text as new Date(ms).toISOString(), without a Date per call for whole milliseconds. */
export function isoTime(ms: number): string {
  if (!Number.isSafeInteger(ms) || ms < 0 || ms >= 253_402_300_800_000) return new Date(ms).toISOString();
  const day = Math.floor(ms / DAY_MS);
  if (day !== isoDay) {
    isoDay = day;
    isoDayText = new Date(day * DAY_MS).toISOString().slice(0, 11);
  }
  let r = ms - day * DAY_MS;
  const milli = r % 1000;
  r = (r - milli) / 1000;
  const sec = r % 60;
  r = (r - sec) / 60;
  const min = r % 60;
  const hour = (r - min) / 60;
  return `${isoDayText}${PAD2[hour]}:${PAD2[min]}:${PAD2[sec]}.${milli < 10 ? '00' : milli < 100 ? '0' : ''}${milli}Z`;
}

/** A number as JSON writes it (non-finite numbers become null). */
const jsonNumber = (v: number) => (Number.isFinite(v) ? String(v) : 'null');

const POW10 = [1, 10, 100, 1_000, 10_000, 100_000, 1_000_000];

/**
 * round(v, digits) as JSON text, from integers: the same text as String(round(v, digits)) (the
 * shortest form of the double nearest to a decimal of at most 15 digits is that decimal), but
 * without a double-to-text conversion, which was the largest cost of a computed track.
 */
export function roundedJson(v: number, digits: number): string {
  const f = POW10[digits] ?? 10 ** digits;
  const n = Math.round(v * f);
  if (!Number.isSafeInteger(n) || Math.abs(n) >= 1e15) return jsonNumber(round(v, digits));
  const a = n < 0 ? -n : n;
  const whole = Math.floor(a / f);
  let frac = a - whole * f;
  const sign = n < 0 ? '-' : '';
  if (frac === 0) return `${sign}${whole}`;
  let width = digits;
  while (frac % 10 === 0) {
    frac /= 10;
    width--;
  }
  const text = String(frac);
  return `${sign}${whole}.${text.length < width ? '0'.repeat(width - text.length) + text : text}`;
}

/** `[{ t, lat, lon, altKm, sunlit }, ...]` as JSON text: the same as JSON.stringify(samples.map(pointJson)). */
export function trackPointsJson(samples: readonly TrackSample[]): string {
  let out = '[';
  for (let i = 0; i < samples.length; i++) {
    const s = samples[i] as TrackSample;
    out += `${i === 0 ? '' : ','}{"t":"${isoTime(s.t)}","lat":${roundedJson(s.lat, 5)},"lon":${roundedJson(s.lon, 5)},"altKm":${roundedJson(s.altKm, 3)},"sunlit":${s.sunlit ? 'true' : 'false'}}`;
  }
  return `${out}]`;
}


/** One track point as an object (the shape trackPointsJson writes as text). */
export function pointJson(s: TrackSample) {
  return { t: iso(s.t), lat: round(s.lat, 5), lon: round(s.lon, 5), altKm: round(s.altKm, 3), sunlit: s.sunlit };
}

/**
 * The track's FeatureCollection as JSON text with coordinates to 5 decimals, as the JSON points
 * (about 1 m; RFC 7946 section 11.2 asks for no more precision than the data has). Split points at
 * ±180 stay exact, and both ends of a split share one rounded latitude, so the parts still meet.
 * Features are written as trackToGeoJSON makes them: type, geometry, properties.
 */
export function trackGeoJsonText(fc: ReturnType<typeof trackToGeoJSON>): string {
  const position = (c: readonly number[]) => `[${c.map((v) => roundedJson(v, 5)).join(',')}]`;
  const features = fc.features.map((f) => {
    const g = f.geometry;
    const geometry =
      g.type === 'MultiLineString'
        ? `{"type":"MultiLineString","coordinates":[${g.coordinates.map((line) => `[${line.map(position).join(',')}]`).join(',')}]}`
        : `{"type":"Point","coordinates":${position(g.coordinates)}}`;
    return `{"type":"Feature","geometry":${geometry},"properties":${JSON.stringify(f.properties ?? null)}}`;
  });
  return `{"type":"FeatureCollection","features":[${features.join(',')}]}`;
}

