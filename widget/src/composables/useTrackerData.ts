/**
 * The widget's data: one Tracker per set of attributes (it loads /v1 and keeps the state), the
 * display settings those attributes and the embed settle on, and the world map with its named
 * areas. Everything pauses and resumes with the clock's `running`.
 */
import { computed, onBeforeUnmount, shallowRef, ref, watch, type Ref } from 'vue';
import { loadLand, loadWorld, scriptUrl, type World } from '../lib/assets.ts';
import { settle } from '../lib/config.ts';
import { clock } from '../lib/format.ts';
import { namedAreas, type NamedArea } from '../lib/places.ts';
import { Tracker, type TrackerEvent } from '../lib/tracker.ts';

/** The attributes of <nadir-track>, as Vue props. */
export interface NadirTrackProps {
  satellites?: string;
  apiKey?: string;
  embed?: string;
  apiBase?: string;
  projection?: string;
  orbitsBehind?: number;
  orbitsAhead?: number;
  observer?: string;
  layers?: string;
  timeZone?: string;
  locale?: string;
  theme?: string;
  /** ISO 8601 time the map is pinned to (a launch page); the time control moves from it. */
  at?: string;
  /** What to call a fixed observer place in the pass list. */
  observerName?: string;
}

export function useTrackerData(
  props: NadirTrackProps,
  opts: { running: Ref<boolean>; dispatch: (type: string, detail: unknown) => void; onReplaced: () => void },
) {
  const apiBase = computed(() => props.apiBase || new URL('/', scriptUrl).origin);
  const attrs = () => ({
    satellites: props.satellites,
    projection: props.projection,
    orbitsBehind: props.orbitsBehind,
    orbitsAhead: props.orbitsAhead,
    observer: props.observer,
    layers: props.layers,
    theme: props.theme,
    timeZone: props.timeZone,
    locale: props.locale,
    observerName: props.observerName,
  });
  const tracker = shallowRef<Tracker | null>(null);
  const state = computed(() => tracker.value?.state ?? null);
  const display = computed(() => settle(attrs(), state.value?.embed));
  const clockOpts = computed(() => ({ timeZone: display.value.timeZone, locale: display.value.locale }));

  function onTrackerEvent(e: TrackerEvent) {
    opts.dispatch(e.type === 'load' ? 'nadir-load' : 'nadir-error', e.detail);
  }
  const newTracker = () =>
    new Tracker({
      apiBase: apiBase.value,
      apiKey: props.apiKey ?? '',
      embedId: props.embed || undefined,
      attrs: attrs(),
      origin: typeof location === 'undefined' ? undefined : location.origin,
      formatTime: (ms) => clock(clockOpts.value).format(ms),
      onEvent: onTrackerEvent,
    });

  watch(
    () => [props.satellites, props.apiKey, props.embed, apiBase.value, props.orbitsBehind, props.orbitsAhead, props.observer, props.layers],
    () => {
      tracker.value?.dispose();
      const t = newTracker();
      tracker.value = t;
      opts.onReplaced();
      if (opts.running.value) t.resume();
    },
  );

  // ---- world map -------------------------------------------------------------------------
  const world = shallowRef<World | null>(null);
  const worldFailed = ref(false);
  const areas = shallowRef<NamedArea[]>([]);
  function whenIdle(fn: () => void) {
    if (typeof requestIdleCallback === 'function') requestIdleCallback(fn, { timeout: 2000 });
    else setTimeout(fn, 200);
  }
  /**
   * The land outline first (half the bytes of the countries), so the coastlines are drawn no later
   * than the tracks on a slow link; the countries, which only name places, come when the page is
   * idle after that and then replace the land (same coastlines).
   */
  function fetchWorld() {
    void loadLand().then((land) => {
      if (land && !world.value) world.value = { land, countries: [] };
      worldFailed.value = !land && !world.value;
      whenIdle(() =>
        void loadWorld().then((w) => {
          if (w) {
            world.value = w;
            worldFailed.value = false;
            areas.value = namedAreas(w.countries);
          } else if (!world.value) worldFailed.value = true;
        }),
      );
    });
  }

  watch(opts.running, (r) => {
    if (r) {
      tracker.value?.resume();
      if (!world.value) fetchWorld();
    } else {
      tracker.value?.pause();
    }
  });

  // The first tracker starts in setup, before the first render, so its requests leave as early as possible.
  tracker.value = newTracker();
  if (opts.running.value) {
    tracker.value.resume();
    fetchWorld();
  }
  onBeforeUnmount(() => tracker.value?.dispose());

  return { tracker, state, display, clockOpts, world, worldFailed, areas };
}
