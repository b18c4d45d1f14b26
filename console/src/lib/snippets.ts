/**
 * The texts a publisher pastes into a page: the script form and the hosted iframe form of a saved
 * embed, and the inline-attribute form with a browser key. Also the attribute map the live
 * preview gives `<nadir-track>`, so the preview and the snippet cannot disagree.
 */
import type { EmbedOptions, Layer } from '../api/types.ts';

export const ALL_LAYERS: readonly Layer[] = ['footprint', 'terminator', 'passes', 'graticule', 'labels'];

export const DEFAULT_EMBED_OPTIONS: EmbedOptions = {
  projection: 'equal-earth',
  layers: ['footprint', 'terminator', 'graticule', 'labels'],
  observer: '',
  theme: 'auto',
  orbitsBehind: 1,
  orbitsAhead: 1,
  width: '100%',
  height: '420',
};

/** Escape a value for a double-quoted HTML attribute. */
export function escapeAttr(v: string): string {
  return v.replace(/&/g, '&amp;').replace(/"/g, '&quot;').replace(/</g, '&lt;').replace(/>/g, '&gt;');
}

/** The `<nadir-track>` attributes for these satellites and options (defaults left out). */
export function widgetAttributes(satelliteIds: readonly string[], o: EmbedOptions): Record<string, string> {
  const a: Record<string, string> = {};
  if (satelliteIds.length) a.satellites = satelliteIds.join(',');
  if (o.projection !== 'equal-earth') a.projection = o.projection;
  a.layers = ALL_LAYERS.filter((l) => o.layers.includes(l)).join(',');
  if (o.observer.trim()) a.observer = o.observer.trim();
  if (o.theme !== 'light') a.theme = o.theme;
  if (o.orbitsBehind !== 1) a['orbits-behind'] = String(o.orbitsBehind);
  if (o.orbitsAhead !== 1) a['orbits-ahead'] = String(o.orbitsAhead);
  if (o.timeZone) a['time-zone'] = o.timeZone;
  if (o.locale) a.locale = o.locale;
  return a;
}

function attrs(map: Record<string, string>): string {
  return Object.entries(map)
    .map(([k, v]) => ` ${k}="${escapeAttr(v)}"`)
    .join('');
}

/** "640" -> "640px"; any other CSS length as given, stripped of characters that could end the attribute. */
export function cssLength(v: string, fallback: string): string {
  const t = v.trim().replace(/["'<>;{}]/g, '');
  if (!t) return fallback;
  return /^\d+(\.\d+)?$/.test(t) ? `${t}px` : t;
}

function sizeStyle(o: EmbedOptions): string {
  return `display:block;width:${cssLength(o.width, '100%')};height:${cssLength(o.height, '420px')}`;
}

function cleanOrigin(origin: string): string {
  return origin.replace(/\/+$/, '');
}

/** Script form of a saved embed: one module script and one element. */
export function scriptSnippet(origin: string, embedId: string, o: EmbedOptions): string {
  const base = cleanOrigin(origin);
  return [
    `<script type="module" src="${escapeAttr(base)}/widget/nadir-track.js"></script>`,
    `<nadir-track embed="${escapeAttr(embedId)}" style="${sizeStyle(o)}"></nadir-track>`,
  ].join('\n');
}

/** Hosted iframe form, for pages (or CMSs) that strip scripts. */
export function iframeSnippet(origin: string, embedId: string, o: EmbedOptions, title: string): string {
  const base = cleanOrigin(origin);
  const style = `border:0;display:block;width:${cssLength(o.width, '100%')};height:${cssLength(o.height, '420px')}`;
  return `<iframe src="${escapeAttr(base)}/embed/${encodeURIComponent(embedId)}" title="${escapeAttr(title || 'Satellite ground track')}" loading="lazy" style="${style}"></iframe>`;
}

/** Inline form: every option as an attribute, with a browser key the publisher fills in. */
export function inlineSnippet(origin: string, satelliteIds: readonly string[], o: EmbedOptions, keyText = 'nlb_YOUR_BROWSER_KEY'): string {
  const base = cleanOrigin(origin);
  const a = { 'api-key': keyText, ...widgetAttributes(satelliteIds, o) };
  return [
    `<script type="module" src="${escapeAttr(base)}/widget/nadir-track.js"></script>`,
    `<nadir-track${attrs(a)} style="${sizeStyle(o)}"></nadir-track>`,
  ].join('\n');
}
