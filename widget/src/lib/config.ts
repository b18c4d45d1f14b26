/** Attribute values (and saved embed options) read into one settled configuration. */
import type { EmbedConfig } from './api.ts';

export type Projection = 'equal-earth' | 'globe';
export type Theme = 'light' | 'dark' | 'auto';
export type Layer = 'footprint' | 'terminator' | 'passes' | 'graticule' | 'labels';
export const ALL_LAYERS: readonly Layer[] = ['footprint', 'terminator', 'passes', 'graticule', 'labels'];

export interface Observer {
  lat: number;
  lon: number;
  altM: number;
}

export interface Settings {
  satellites: string[];
  projection: Projection;
  orbitsBehind: number;
  orbitsAhead: number;
  /** A place, 'auto' (ask the browser after the reader agrees) or none. */
  observer: Observer | 'auto' | null;
  layers: Set<Layer>;
  theme: Theme;
  timeZone: string | undefined;
  locale: string | undefined;
  /** What to call a fixed observer place in the pass list ("Ostwick Hall"); none: its coordinates. */
  observerName: string | undefined;
}

/** The attributes as the element receives them (all optional strings or numbers). */
export interface RawOptions {
  satellites?: string | string[] | undefined;
  projection?: string | undefined;
  orbitsBehind?: number | string | undefined;
  orbitsAhead?: number | string | undefined;
  observer?: string | EmbedConfig['options']['observer'] | undefined;
  layers?: string | string[] | undefined;
  theme?: string | undefined;
  timeZone?: string | undefined;
  locale?: string | undefined;
  observerName?: string | undefined;
}

export function parseList(v: string | string[] | undefined): string[] {
  const items = Array.isArray(v) ? v : (v ?? '').split(/[\s,]+/);
  return items.map((s) => s.trim()).filter(Boolean);
}

/** "lat,lon[,altM]" within range, or 'auto', or null. */
export function parseObserver(v: RawOptions['observer']): Observer | 'auto' | null {
  if (v === null || v === undefined || v === '') return null;
  if (typeof v === 'object') return validObserver(v.lat, v.lon, v.altM ?? 0);
  if (v.trim().toLowerCase() === 'auto') return 'auto';
  const [lat, lon, alt] = v.split(',').map((s) => Number(s.trim()));
  return validObserver(lat, lon, alt ?? 0);
}

function validObserver(lat: number | undefined, lon: number | undefined, altM: number): Observer | null {
  if (lat === undefined || lon === undefined || !Number.isFinite(lat) || !Number.isFinite(lon)) return null;
  if (Math.abs(lat) > 90 || Math.abs(lon) > 180) return null;
  return { lat, lon, altM: Number.isFinite(altM) ? altM : 0 };
}

function orbits(v: number | string | undefined, fallback: number): number {
  const n = typeof v === 'number' ? v : v === undefined || v === '' ? NaN : Number(v);
  return Number.isFinite(n) ? Math.min(5, Math.max(0, n)) : fallback;
}

/** First non-empty of the element's own attribute and the embed's saved option. */
function pick<T>(attr: T | undefined | null, saved: T | undefined | null): T | undefined {
  return attr === undefined || attr === null || attr === '' ? (saved ?? undefined) : attr;
}

/** A place name for people: trimmed, at most 60 characters, none when empty. */
function observerName(v: string | undefined): string | undefined {
  const s = typeof v === 'string' ? v.replace(/\s+/g, ' ').trim().slice(0, 60) : '';
  return s || undefined;
}

/**
 * Settle the configuration: attributes set on the element win over the saved embed options,
 * which win over the defaults (Equal Earth, one orbit behind and one ahead, all layers, light).
 */
export function settle(attrs: RawOptions, embed?: EmbedConfig | null): Settings {
  const o = embed?.options ?? {};
  const projection = pick(attrs.projection, o.projection);
  const theme = pick(attrs.theme, o.theme);
  const layers = pick<string | string[]>(attrs.layers, o.layers);
  return {
    satellites: parseList(pick(attrs.satellites, embed?.satellites)),
    projection: projection === 'globe' ? 'globe' : 'equal-earth',
    orbitsBehind: orbits(pick(attrs.orbitsBehind, o.orbitsBehind), 1),
    orbitsAhead: orbits(pick(attrs.orbitsAhead, o.orbitsAhead), 1),
    observer: parseObserver(pick(attrs.observer, o.observer)),
    layers: new Set(layers === undefined ? ALL_LAYERS : (parseList(layers).filter((l) => (ALL_LAYERS as string[]).includes(l)) as Layer[])),
    theme: theme === 'dark' || theme === 'auto' ? theme : 'light',
    timeZone: pick(attrs.timeZone, o.timeZone),
    locale: pick(attrs.locale, o.locale),
    observerName: observerName(pick(attrs.observerName, o.observerName)),
  };
}
