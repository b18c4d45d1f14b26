/**
 * The embed builder's observer: "lat,lon[,altM]" in degrees and metres, "auto" (the reader's own
 * place) or empty (none). The same rules as the server's (services/embeds.ts observerProblems),
 * so the builder says what is wrong before anything is sent.
 */

const NUMBER = /^[+-]?(\d+(\.\d*)?|\.\d+)$/;

export interface ObserverFields {
  lat: string;
  lon: string;
  alt: string;
}

export type ObserverCheck = { ok: true; text: string } | { ok: false; field: 'lat' | 'lon' | 'alt'; message: string };

/** The observer text for a fixed place, or what is wrong with the fields. */
export function placeObserver(f: ObserverFields): ObserverCheck {
  const lat = f.lat.trim();
  const lon = f.lon.trim();
  const alt = f.alt.trim();
  if (lat === '') return { ok: false, field: 'lat', message: 'Enter the latitude, from -90 to 90 (north positive).' };
  if (!NUMBER.test(lat) || Math.abs(Number(lat)) > 90) return { ok: false, field: 'lat', message: `Latitude is a number from -90 to 90 (north positive); “${lat}” is not.` };
  if (lon === '') return { ok: false, field: 'lon', message: 'Enter the longitude, from -180 to 180 (east positive).' };
  if (!NUMBER.test(lon) || Math.abs(Number(lon)) > 180) return { ok: false, field: 'lon', message: `Longitude is a number from -180 to 180 (east positive); “${lon}” is not.` };
  if (alt !== '' && (!NUMBER.test(alt) || Number(alt) < -500 || Number(alt) > 10_000)) {
    return { ok: false, field: 'alt', message: `Altitude is a number of metres from -500 to 10 000, or empty; “${alt}” is not.` };
  }
  return { ok: true, text: [lat, lon, alt].filter(Boolean).join(',') };
}

/** Split a saved observer text back into the builder's fields. */
export function observerFields(text: string): { mode: 'none' | 'auto' | 'place'; fields: ObserverFields } {
  const t = text.trim();
  if (t === 'auto') return { mode: 'auto', fields: { lat: '', lon: '', alt: '' } };
  if (!t) return { mode: 'none', fields: { lat: '', lon: '', alt: '' } };
  const [lat = '', lon = '', alt = ''] = t.split(',').map((s) => s.trim());
  return { mode: 'place', fields: { lat, lon, alt } };
}
