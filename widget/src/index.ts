/**
 * @nadirline/widget: the <nadir-track> custom element.
 * `register()` defines the element once (guarded); the built script calls it for you.
 */
import { defineCustomElement } from 'vue';
import NadirTrack from './NadirTrack.ce.vue';

export const NadirTrackElement = defineCustomElement(NadirTrack);

export function register(tag = 'nadir-track'): void {
  if (typeof customElements !== 'undefined' && !customElements.get(tag)) customElements.define(tag, NadirTrackElement);
}

export type { LoadDetail, ErrorDetail } from './lib/tracker.ts';
export type { SelectDetail } from './lib/events.ts';
