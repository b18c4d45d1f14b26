/**
 * Files the widget loads beside its script: the world map (world-atlas countries-110m, which
 * holds both the land and the named countries) and Work Sans. The build copies them to
 * `assets/` with a content hash in the name (see vite.config.ts) and defines __NADIR_ASSETS__.
 */
import { feature } from 'topojson-client';
import type { Topology, GeometryCollection } from 'topojson-specification';
import type { Feature, FeatureCollection, Geometry, MultiPolygon, Polygon } from 'geojson';

import type { Lang, WordTable } from './words.ts';

declare const __NADIR_ASSETS__: { world: string; land: string; fonts: Record<string, string>; words: Record<string, string> };

/**
 * URL of this script, read once while it runs: `document.currentScript` for the classic script,
 * `import.meta.url` for the module.
 */
export const scriptUrl: string =
  (typeof document !== 'undefined' && (document.currentScript as HTMLScriptElement | null)?.src) || import.meta.url ||
  (typeof location === "undefined" ? "" : location.href);

export function assetUrl(name: string, base = scriptUrl): string {
  return new URL(name, base).toString();
}

/** The family name the widget registers; unique, so the host page's own fonts are never changed. */
export const FONT_FAMILY = 'Nadirline Work Sans';

/**
 * Register Work Sans once for the whole document. A @font-face inside a shadow root is ignored by
 * Chromium, so the face lives in one guarded <style> in the document head and the shadow root
 * inherits the family.
 */
export function registerFont(doc: Document = document, base = scriptUrl): void {
  if (doc.getElementById('nadir-track-font')) return;
  const style = doc.createElement('style');
  style.id = 'nadir-track-font';
  style.textContent = Object.entries(__NADIR_ASSETS__.fonts)
    .map(
      ([weight, file]) =>
        `@font-face{font-family:"${FONT_FAMILY}";font-style:normal;font-weight:${weight};font-display:swap;src:url("${assetUrl(file, base)}") format("woff2")}`,
    )
    .join('\n');
  doc.head.append(style);
}

export interface World {
  land: Feature<Polygon | MultiPolygon> | FeatureCollection<Polygon | MultiPolygon>;
  countries: Feature<Geometry, { name?: string }>[];
}

let worldPromise: Promise<World | null> | undefined;
let landPromise: Promise<World['land'] | null> | undefined;

/**
 * The land outline alone (world-atlas land-110m, about half the bytes of the countries), once per
 * page: what the map draws first, so coastlines come no later than tracks on a slow link. Null,
 * never a throw, when it cannot be had; a later call tries again.
 */
export function loadLand(base = scriptUrl, fetchImpl: typeof fetch = (u) => fetch(u)): Promise<World['land'] | null> {
  landPromise ??= fetchImpl(assetUrl(__NADIR_ASSETS__.land, base))
    .then((r) => (r.ok ? (r.json() as Promise<Topology>) : null))
    .then((topo) => (topo ? (feature(topo, topo.objects.land as GeometryCollection) as World['land']) : null))
    .catch(() => null);
  const p = landPromise;
  void p.then((l) => {
    if (!l && landPromise === p) landPromise = undefined;
  });
  return p;
}

/** Load the world map once per page; null (never a throw) when it cannot be had. */
export function loadWorld(base = scriptUrl, fetchImpl: typeof fetch = (u) => fetch(u)): Promise<World | null> {
  worldPromise ??= fetchImpl(assetUrl(__NADIR_ASSETS__.world, base))
    .then((r) => (r.ok ? (r.json() as Promise<Topology>) : null))
    .then((topo) => {
      if (!topo) return null;
      const land = feature(topo, topo.objects.land as GeometryCollection) as World['land'];
      const countries = (feature(topo, topo.objects.countries as GeometryCollection) as FeatureCollection<Geometry, { name?: string }>).features;
      return { land, countries };
    })
    .catch(() => null);
  const p = worldPromise;
  // a failed load may be retried by a later call
  void p.then((w) => {
    if (!w && worldPromise === p) worldPromise = undefined;
  });
  return p;
}

const wordPromises = new Map<string, Promise<WordTable | null>>();

/**
 * The word table of a language beyond English, fetched once per page from `assets/`; null for
 * English (built in) and, never a throw, when it cannot be had (the widget then reads in English).
 */
export function loadWords(lang: Lang, base = scriptUrl, fetchImpl: typeof fetch = (u) => fetch(u)): Promise<WordTable | null> {
  const file = typeof __NADIR_ASSETS__ === 'undefined' ? undefined : __NADIR_ASSETS__.words?.[lang];
  if (lang === 'en' || !file) return Promise.resolve(null);
  let p = wordPromises.get(lang);
  if (!p) {
    p = fetchImpl(assetUrl(file, base))
      .then((r) => (r.ok ? (r.json() as Promise<WordTable>) : null))
      .catch(() => null);
    wordPromises.set(lang, p);
    void p.then((w) => {
      if (!w) wordPromises.delete(lang);
    });
  }
  return p;
}
