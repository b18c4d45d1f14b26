/**
 * The widget's data side, without any DOM: it settles the configuration (from attributes or a
 * saved embed), fetches satellite metadata, track windows and passes from /v1, keeps them while
 * the network is down, retries with backoff, and stops all network activity while paused.
 * Vue reactivity carries the state to the components; sample arrays are kept raw for speed.
 */
import { markRaw, reactive } from 'vue';
import { NadirApi, PASS_MIN_ELEVATION_DEG, type ApiProblem, type ApiResult, type ElementsInfo, type EmbedConfig, type FetchLike, type Pass } from './api.ts';
import type { SkyPathPoint } from './skyplot.ts';
import { settle, type Observer, type RawOptions, type Settings } from './config.ts';
import { actionFor, noticeFor, type Notice } from './messages.ts';
import { LADDER, mergeSamples, planWindows, type Sample, type WindowPlan } from './track.ts';

export interface SatState {
  id: string;
  /** The satellite's name once /v1 gave it; its id until then (see `named`). */
  name: string;
  /** Whether `name` came from the API (chips show a placeholder, not a raw id, until then). */
  named: boolean;
  /** 1-based colour slot (--nadir-series-N). */
  slot: number;
  elements: ElementsInfo | null;
  /** Merged, time-sorted samples of all windows held (raw, not reactive inside). */
  samples: Sample[];
  plan: WindowPlan | null;
  passes: Pass[] | null;
  /** Never sets for the observer (a high orbit always above the horizon). */
  alwaysUp: boolean;
  /** A problem that concerns only this satellite (not found, stale, decayed). */
  notice: Notice | null;
  /** Gone for good (not found, decayed): no more requests for it. */
  dead: boolean;
}

export interface TrackerState {
  phase: 'config' | 'loading' | 'ready';
  settings: Settings;
  sats: SatState[];
  /** A problem that stops the whole map (bad key, origin, quota, no satellites). */
  fatal: Notice | null;
  /** A passing problem (network, rate limit): data is kept and marked out of date. */
  transient: Notice | null;
  /** When the last full round of requests succeeded (Unix ms). */
  lastOkMs: number | null;
  observer: Observer | null;
  /** The saved embed, once loaded (raw). */
  embed: EmbedConfig | null;
}

export type TrackerEvent =
  | { type: 'load'; detail: LoadDetail }
  | { type: 'error'; detail: ErrorDetail };

export interface LoadDetail {
  satellites: { id: string; name: string; epoch: string | null; ageDays: number | null; stale: boolean }[];
  embed: string | null;
}
export interface ErrorDetail {
  code: string;
  status: number;
  /** Words the element shows. */
  message: string;
  heading: string;
  /** Satellite id when the problem concerns one. */
  satellite: string | null;
  fatal: boolean;
  /** Milliseconds until the next try, when the widget retries by itself. */
  retryMs: number | null;
}

export interface TrackerOptions {
  apiBase: string;
  apiKey: string;
  embedId?: string | undefined;
  attrs: RawOptions;
  fetch?: FetchLike;
  now?: () => number;
  origin?: string;
  /** Formats the time of the last good data for messages. */
  formatTime?: (ms: number) => string;
  onEvent?: (e: TrackerEvent) => void;
}

const REFRESH_MS = 30_000;
/**
 * From this many satellites on, a round asks for all of them together: names and elements from
 * one GET /v1/satellites, and each track window from one GET /v1/tracks per window (at most
 * BATCH_IDS ids each), so 50 satellites cost a handful of requests instead of a few hundred.
 */
export const BATCH_FROM = 4;
const BATCH_IDS = 50;
const PASS_ALIGN_MS = 6 * 3600_000;
const PASS_DAYS = 2;
const FALLBACK_PERIOD_MIN = 95;

export class Tracker {
  readonly state: TrackerState;
  private api: NadirApi;
  private readonly now: () => number;
  private timer: ReturnType<typeof setTimeout> | undefined;
  private abort: AbortController | undefined;
  private running = false;
  private generation = 0;
  private attempt = 0;
  private bumped = false;
  private loadedOnce = false;
  private embed: EmbedConfig | null = null;
  /** Problems already reported (one nadir-error each); passing ones are forgotten once a round succeeds. */
  private readonly reported = new Map<string, 'lasting' | 'passing'>();
  private readonly windows = new Map<string, Map<number, Sample[]>>();
  private readonly passKey = new Map<string, string>();
  /** The time the map shows (time control, `at`); null: now. Track windows follow it, passes stay on now. */
  private shown: (() => number) | null = null;

  constructor(private readonly opts: TrackerOptions) {
    this.now = opts.now ?? Date.now;
    this.api = new NadirApi(opts.apiBase, opts.apiKey, opts.fetch, opts.embedId ?? '');
    const settings = settle(opts.attrs);
    this.state = reactive({
      phase: opts.embedId ? 'config' : 'loading',
      settings,
      sats: [],
      fatal: null,
      transient: null,
      lastOkMs: null,
      observer: settings.observer === 'auto' ? null : settings.observer,
      embed: null,
    }) as TrackerState;
    // no key and no embed: say so and ask nothing (every request would be refused)
    if (!opts.apiKey && !opts.embedId) this.setFatal(noticeFor({ code: 'no-key', status: 0 }));
    if (!opts.embedId) this.useSettings(settings);
  }

  get isRunning(): boolean {
    return this.running;
  }

  /** Start or continue: fetch what is missing now, then keep it fresh. */
  resume(): void {
    if (this.running) return;
    this.running = true;
    void this.cycle();
  }

  /** Stop every timer and request until resume(). Data already held stays. */
  pause(): void {
    this.running = false;
    this.generation++;
    clearTimeout(this.timer);
    this.timer = undefined;
    this.abort?.abort();
    this.abort = undefined;
  }

  dispose(): void {
    this.pause();
  }

  /** Set (or clear) the observer, e.g. after the reader agreed to share a location. */
  setObserver(obs: Observer | null): void {
    this.state.observer = obs;
    this.passKey.clear();
    for (const s of this.state.sats) s.passes = null;
    if (this.running) {
      this.pause();
      this.resume();
    }
  }

  /**
   * Show the map at another time (the time control or the `at` attribute): track windows are
   * planned around `shown()` from now on, and the missing ones are asked for at once (if
   * running; a paused tracker asks nothing). Passes stay those after the real now.
   */
  setShownTime(shown: (() => number) | null): void {
    if (shown === null && this.shown === null) return;
    this.shown = shown;
    if (this.running) {
      this.pause();
      this.resume();
    }
  }

  /**
   * The sky path of one pass over the observer (GET .../passes?path=true over the pass alone).
   * Asked only when the reader opens the sky plot; null when it cannot be had.
   */
  async skyPath(satId: string, pass: Pass, signal?: AbortSignal): Promise<SkyPathPoint[] | null> {
    const obs = this.state.observer;
    if (!obs) return null;
    const rise = Date.parse(pass.rise.t);
    const set = Date.parse(pass.set.t);
    const start = rise - 60_000;
    const days = Math.max(0.01, (set - start + 60_000) / 86_400_000);
    const r = await this.api.get<{ passes: (Pass & { path?: SkyPathPoint[] })[] }>(
      `v1/satellites/${encodeURIComponent(satId)}/passes`,
      { lat: Math.round(obs.lat * 100) / 100, lon: Math.round(obs.lon * 100) / 100, altM: Math.round(obs.altM), start: new Date(start).toISOString(), days: Math.round(days * 1e4) / 1e4, minElevation: PASS_MIN_ELEVATION_DEG, path: 'true' },
      signal,
    );
    if (!r.ok) return null;
    const match = r.value.passes.find((p) => Math.abs(Date.parse(p.culmination.t) - Date.parse(pass.culmination.t)) < 120_000);
    return match?.path ?? null;
  }

  /** Link to the pass calendar of a satellite over the observer (iCalendar), or null without an observer. */
  calendarUrl(satId: string): string | null {
    const obs = this.state.observer;
    if (!obs) return null;
    return this.api.url(`v1/satellites/${encodeURIComponent(satId)}/passes.ics`, {
      lat: Math.round(obs.lat * 100) / 100,
      lon: Math.round(obs.lon * 100) / 100,
      altM: Math.round(obs.altM),
      days: 7,
      minElevation: PASS_MIN_ELEVATION_DEG,
    });
  }

  private useSettings(settings: Settings): void {
    this.state.settings = settings;
    if (settings.observer !== 'auto' && settings.observer) this.state.observer = settings.observer;
    this.state.sats = settings.satellites.map((id, i) => ({
      id,
      name: id,
      named: false,
      slot: (i % 6) + 1,
      elements: null,
      samples: markRaw([]),
      plan: null,
      passes: null,
      alwaysUp: false,
      notice: null,
      dead: false,
    }));
    if (settings.satellites.length === 0 && !this.state.fatal) this.setFatal(noticeFor({ code: 'no-satellites', status: 0 }));
  }

  private async cycle(): Promise<void> {
    const gen = ++this.generation;
    clearTimeout(this.timer);
    this.abort?.abort();
    const abort = new AbortController();
    this.abort = abort;
    let next: number | undefined;
    try {
      next = await this.round(abort.signal);
    } catch (e) {
      // a bug of ours must still show words, never a blank box
      this.bumped = false;
      next = this.transientProblem({ ok: false, code: 'widget', status: 0, title: String(e), detail: '' });
    }
    if (!this.running || gen !== this.generation) return;
    if (next !== undefined) this.timer = setTimeout(() => void this.cycle(), next);
  }

  /** One round of requests. Returns when to run the next one (undefined: not by itself). */
  private async round(signal: AbortSignal): Promise<number | undefined> {
    if (this.state.fatal && !this.state.fatal.retryMs) return undefined;
    if (this.state.phase === 'config') {
      const r = await this.api.embed(this.opts.embedId!, signal);
      if (signal.aborted) return undefined;
      if (!r.ok) return this.problem(r, null) ?? undefined;
      this.embed = r.value;
      this.state.embed = markRaw(r.value);
      if (r.value.apiKey && !this.opts.apiKey) this.api = new NadirApi(this.opts.apiBase, r.value.apiKey, this.opts.fetch, r.value.id);
      this.useSettings(settle(this.opts.attrs, r.value));
      this.state.phase = 'loading';
      if (this.state.fatal) return undefined;
    }
    this.state.fatal = null;

    // every satellite on its own: metadata, then its track windows, then its passes, all
    // satellites at once so the first track is drawn after as few round trips as possible
    const now = this.now();
    this.bumped = false;
    const results =
      this.state.sats.length >= BATCH_FROM ? await this.batchRound(now, signal) : await Promise.all(this.state.sats.map((sat) => this.satRound(sat, now, signal)));
    if (signal.aborted) return undefined;
    const fatal = this.state.fatal as Notice | null; // set again by satRound when the key is refused
    if (fatal) return fatal.retryMs;
    const stops = results.filter((r) => r !== null);
    if (stops.length > 0) return stops.includes(undefined) ? undefined : Math.min(...(stops as number[]));

    this.attempt = 0;
    this.state.transient = null;
    for (const [key, kind] of this.reported) if (kind === 'passing') this.reported.delete(key);
    this.state.lastOkMs = now;
    this.state.phase = 'ready';
    if (!this.loadedOnce) {
      this.loadedOnce = true;
      this.emit({
        type: 'load',
        detail: {
          satellites: this.state.sats.filter((s) => !s.dead).map((s) => ({
            id: s.id,
            name: s.name,
            epoch: s.elements?.epoch ?? null,
            ageDays: s.elements?.ageDays ?? null,
            stale: s.elements?.stale ?? false,
          })),
          embed: this.embed?.id ?? this.opts.embedId ?? null,
        },
      });
    }
    const liveSats = this.state.sats.filter((s) => !s.dead);
    if (this.state.sats.length > 0 && liveSats.length === 0) return undefined;
    return REFRESH_MS;
  }

  /** One satellite's share of a round. Returns null when all went well, else what problem() said. */
  private async satRound(sat: SatState, now: number, signal: AbortSignal): Promise<number | undefined | null> {
    if (sat.dead) return null;
    // metadata: /v1/satellites/{id} carries the derived elements; /elements only when it has none.
    // Meanwhile the window around now is asked for on the guess of a low orbit (the common case),
    // so the first track is drawn one round trip sooner; a high orbit just ignores that answer.
    const rung0 = LADDER[0]!;
    const shownMs = this.shown ? this.shown() : now;
    let early: { start: number; answer: Promise<ApiResult<Sample[]>> } | null = null;
    if (!sat.elements) {
      const start = Math.floor(shownMs / rung0.spanMs) * rung0.spanMs;
      early = { start, answer: this.api.track(sat.id, start, start + rung0.spanMs, rung0.stepS, signal) };
      const meta = await this.api.satellite(sat.id, signal);
      if (signal.aborted) return undefined;
      if (!meta.ok) return this.problem(meta, sat);
      if (typeof meta.value.name === 'string' && meta.value.name) sat.name = meta.value.name;
      sat.named = true;
      let el: ElementsInfo | null | undefined = meta.value.derived;
      if (el === undefined) {
        const r = await this.api.elements(sat.id, signal);
        if (signal.aborted) return undefined;
        if (!r.ok) return this.problem(r, sat);
        el = r.value;
      }
      if (!el || !Number.isFinite(el.periodMin)) {
        // the same condition the API names no-element-set when asked for a track
        const p = { code: 'no-element-set', status: 200 };
        sat.dead = true;
        sat.notice = noticeFor(p, { satellite: sat.name });
        this.report(sat.notice, p, sat.id);
        return null;
      }
      sat.elements = markRaw(el);
      sat.notice = null;
      if (el.stale) {
        const p = { code: 'stale-element-set', status: 200 };
        sat.notice = noticeFor(p, { satellite: sat.name, ageDays: el.ageDays });
        this.report(sat.notice, p, sat.id);
      }
    }

    // track windows not yet held, all at once
    const s = this.state.settings;
    const plan = planWindows(shownMs, sat.elements.periodMin || FALLBACK_PERIOD_MIN, s.orbitsBehind, s.orbitsAhead);
    let held = this.windows.get(sat.id);
    if (!held || (sat.plan && sat.plan.spanMs !== plan.spanMs)) {
      held = new Map();
      this.windows.set(sat.id, held);
    }
    const useEarly = !!early && plan.spanMs === rung0.spanMs && plan.stepS === rung0.stepS && plan.starts.includes(early.start) && !held.has(early.start);
    const missing = plan.starts.filter((start) => !held.has(start) && !(useEarly && start === early!.start));
    const pending = Promise.all(missing.map((start) => this.api.track(sat.id, start, start + plan.spanMs, plan.stepS, signal)));
    let stop: number | undefined | null = null;
    if (useEarly) {
      const r = await early!.answer;
      if (signal.aborted) return undefined;
      if (r.ok) {
        held.set(early!.start, r.value);
        sat.plan = plan;
        sat.samples = markRaw(mergeSamples([...held.values()])); // draw the part around now at once
      } else stop = this.problem(r, sat);
    }
    const answers = await pending;
    if (signal.aborted) return undefined;
    answers.forEach((r, i) => {
      if (r.ok) held.set(missing[i]!, r.value);
      else if (stop === null) stop = this.problem(r, sat);
    });
    for (const start of [...held.keys()]) if (!plan.starts.includes(start)) held.delete(start);
    sat.plan = plan;
    if (missing.length > 0 || useEarly) sat.samples = markRaw(mergeSamples([...held.values()]));
    if (stop !== null || sat.dead) return stop;

    // passes over the observer
    const obs = this.state.observer;
    if (obs && s.layers.has('passes')) {
      const start = Math.floor(now / PASS_ALIGN_MS) * PASS_ALIGN_MS;
      const key = `${obs.lat},${obs.lon},${obs.altM},${start}`;
      if (this.passKey.get(sat.id) !== key) {
        const r = await this.api.passes(sat.id, obs, start, PASS_DAYS, signal);
        if (signal.aborted) return undefined;
        if (!r.ok) return this.problem(r, sat);
        sat.passes = markRaw(Array.isArray(r.value.passes) ? r.value.passes : []);
        sat.alwaysUp = r.value.alwaysUp === true;
        this.passKey.set(sat.id, key);
      }
    }
    return null;
  }

  /**
   * A round for many satellites at once: one metadata request for all that lack it (with the
   * window around now asked for alongside, on the guess of low orbits), then each missing track
   * window once for all satellites that need it, then passes.
   */
  private async batchRound(now: number, signal: AbortSignal): Promise<(number | undefined | null)[]> {
    const live = () => this.state.sats.filter((x) => !x.dead);
    const rung0 = LADDER[0]!;
    const early = new Map<number, Promise<ApiResult<Map<string, ApiResult<Sample[]>>>[]>>();
    const chunks = (ids: string[]) => Array.from({ length: Math.ceil(ids.length / BATCH_IDS) }, (_, i) => ids.slice(i * BATCH_IDS, (i + 1) * BATCH_IDS));
    const ask = (ids: string[], start: number, spanMs: number, stepS: number) => Promise.all(chunks(ids).map((c) => this.api.tracks(c, start, start + spanMs, stepS, signal)));
    const results: (number | undefined | null)[] = [];

    const unnamed = live().filter((x) => !x.elements);
    const earlyStart = Math.floor(now / rung0.spanMs) * rung0.spanMs;
    if (unnamed.length > 0) {
      early.set(earlyStart, ask(unnamed.map((x) => x.id), earlyStart, rung0.spanMs, rung0.stepS));
      const list = await this.api.satellites(signal);
      if (signal.aborted) return [undefined];
      if (!list.ok) return [actionFor(list) === 'stop-satellite' ? this.transientProblem(list) : this.problem(list, null)];
      const byId = new Map((list.value.satellites ?? []).map((x) => [x.id, x]));
      for (const sat of unnamed) {
        const meta = byId.get(sat.id);
        // the list holds every satellite this key may see: one that is not there is not found
        if (!meta) {
          results.push(this.problem({ ok: false, code: 'not-found', status: 404, title: 'Not found', detail: '' }, sat));
          continue;
        }
        if (typeof meta.name === 'string' && meta.name) sat.name = meta.name;
        sat.named = true;
        let el: ElementsInfo | null | undefined = meta.derived;
        if (el === undefined) {
          const r = await this.api.elements(sat.id, signal);
          if (signal.aborted) return [undefined];
          if (!r.ok) {
            results.push(this.problem(r, sat));
            continue;
          }
          el = r.value;
        }
        this.useElements(sat, el);
      }
    }

    // the windows each satellite lacks, grouped so that one request serves every satellite that needs a window
    const s = this.state.settings;
    const groups = new Map<string, { start: number; spanMs: number; stepS: number; sats: SatState[] }>();
    for (const sat of live()) {
      if (!sat.elements) continue;
      const plan = planWindows(now, sat.elements.periodMin || FALLBACK_PERIOD_MIN, s.orbitsBehind, s.orbitsAhead);
      let held = this.windows.get(sat.id);
      if (!held || (sat.plan && sat.plan.spanMs !== plan.spanMs)) {
        held = new Map();
        this.windows.set(sat.id, held);
      }
      for (const start of [...held.keys()]) if (!plan.starts.includes(start)) held.delete(start);
      sat.plan = plan;
      for (const start of plan.starts) {
        if (held.has(start)) continue;
        const key = `${start}|${plan.spanMs}|${plan.stepS}`;
        let g = groups.get(key);
        if (!g) groups.set(key, (g = { start, spanMs: plan.spanMs, stepS: plan.stepS, sats: [] }));
        g.sats.push(sat);
      }
    }
    const stopOf = new Map<string, number | undefined | null>();
    const take = (g: { start: number; sats: SatState[] }, answers: ApiResult<Map<string, ApiResult<Sample[]>>>[], ids: string[][]) => {
      answers.forEach((a, i) => {
        const chunk = ids[i]!;
        for (const sat of g.sats.filter((x) => chunk.includes(x.id))) {
          if (sat.dead || stopOf.get(sat.id) != null) continue;
          const r: ApiResult<Sample[]> = a.ok ? a.value.get(sat.id)! : a;
          if (r.ok) {
            this.windows.get(sat.id)!.set(g.start, r.value);
            sat.samples = markRaw(mergeSamples([...this.windows.get(sat.id)!.values()]));
          } else if (!stopOf.has(sat.id)) stopOf.set(sat.id, this.problem(r, sat));
        }
      });
    };
    const pending: Promise<void>[] = [];
    for (const g of groups.values()) {
      const reuse = g.start === earlyStart && g.spanMs === rung0.spanMs && g.stepS === rung0.stepS ? early.get(earlyStart) : undefined;
      // the early answer covers the satellites it asked for; the rest of the group is asked now
      const earlyIds = reuse ? new Set(unnamed.map((x) => x.id)) : new Set<string>();
      const rest = g.sats.filter((x) => !earlyIds.has(x.id));
      if (reuse) pending.push(reuse.then((answers) => take({ start: g.start, sats: g.sats.filter((x) => earlyIds.has(x.id)) }, answers, chunks(unnamed.map((x) => x.id)))));
      if (rest.length > 0) {
        const restIds = chunks(rest.map((x) => x.id));
        pending.push(ask(rest.map((x) => x.id), g.start, g.spanMs, g.stepS).then((answers) => take({ start: g.start, sats: rest }, answers, restIds)));
      }
    }
    await Promise.all(pending);
    if (signal.aborted) return [undefined];
    for (const v of stopOf.values()) results.push(v);

    // passes over the observer, for the satellites still going
    const passes = await Promise.all(live().filter((x) => !stopOf.has(x.id)).map((sat) => this.passRound(sat, now, signal)));
    if (signal.aborted) return [undefined];
    return [...results, ...passes];
  }

  /** Take a satellite's derived elements (or their absence) from a metadata answer. */
  private useElements(sat: SatState, el: ElementsInfo | null): void {
    if (!el || !Number.isFinite(el.periodMin)) {
      const p = { code: 'no-element-set', status: 200 };
      sat.dead = true;
      sat.notice = noticeFor(p, { satellite: sat.name });
      this.report(sat.notice, p, sat.id);
      return;
    }
    sat.elements = markRaw(el);
    sat.notice = null;
    if (el.stale) {
      const p = { code: 'stale-element-set', status: 200 };
      sat.notice = noticeFor(p, { satellite: sat.name, ageDays: el.ageDays });
      this.report(sat.notice, p, sat.id);
    }
  }

  /** Passes over the observer for one satellite when they are shown and not held yet for this place and day. */
  private async passRound(sat: SatState, now: number, signal: AbortSignal): Promise<number | undefined | null> {
    const obs = this.state.observer;
    if (!obs || !this.state.settings.layers.has('passes')) return null;
    const start = Math.floor(now / PASS_ALIGN_MS) * PASS_ALIGN_MS;
    const key = `${obs.lat},${obs.lon},${obs.altM},${start}`;
    if (this.passKey.get(sat.id) === key) return null;
    const r = await this.api.passes(sat.id, obs, start, PASS_DAYS, signal);
    if (signal.aborted) return undefined;
    if (!r.ok) return this.problem(r, sat);
    sat.passes = markRaw(Array.isArray(r.value.passes) ? r.value.passes : []);
    sat.alwaysUp = r.value.alwaysUp === true;
    this.passKey.set(sat.id, key);
    return null;
  }

  /**
   * Handle a failed request. Returns null to carry on with other work, otherwise the delay
   * before the next round (or undefined to stop asking).
   */
  private problem(p: ApiProblem, sat: SatState | null): number | undefined | null {
    if (p.code === 'aborted') return undefined;
    const action = actionFor(p);
    if (action === 'stop-map' || p.code === 'quota-exceeded') {
      const n = noticeFor(p, { origin: this.opts.origin });
      this.setFatal(n, p);
      return n.retryMs;
    }
    if (action === 'stop-satellite') {
      if (sat) {
        // asking again would get the same answer: this satellite stops, the others go on
        sat.dead = true;
        sat.notice = noticeFor(p, { satellite: sat.name, ageDays: sat.elements?.ageDays });
        this.report(sat.notice, p, sat.id);
        return null;
      }
      // the embed itself could not be had
      const n = noticeFor(p, { embed: true });
      this.setFatal({ ...n, fatal: true, retryMs: undefined }, p);
      return undefined;
    }
    return this.transientProblem(p);
  }

  /** A passing problem of the whole map (network, server, rate limit): one notice, one event, a retry. */
  private transientProblem(p: ApiProblem): number {
    // one step of backoff per round, however many requests of the round failed
    if (!this.bumped) this.attempt++;
    this.bumped = true;
    const fmt = this.opts.formatTime;
    const n = noticeFor(p, {
      attempt: this.attempt,
      dataTime: this.state.lastOkMs !== null && fmt ? fmt(this.state.lastOkMs) : undefined,
    });
    this.state.transient = n;
    this.report(n, p, null);
    return n.retryMs ?? REFRESH_MS;
  }

  private setFatal(n: Notice, p?: Pick<ApiProblem, 'code' | 'status'>): void {
    this.state.fatal = n;
    this.state.phase = this.state.phase === 'config' ? 'config' : 'ready';
    this.report(n, p ?? { code: n.code, status: 0 }, null);
  }

  /**
   * One nadir-error per problem, never one per retry or per request: a problem is its code (and
   * the satellite it concerns). Passing problems may be reported again after the map recovered.
   */
  private report(n: Notice, p: Pick<ApiProblem, 'code' | 'status'>, satId: string | null): void {
    const key = `${n.code}|${satId ?? ''}`;
    if (this.reported.has(key)) return;
    this.reported.set(key, n.retryMs === undefined ? 'lasting' : 'passing');
    this.emit({
      type: 'error',
      detail: { code: n.code, status: p.status, message: n.text, heading: n.heading, satellite: satId, fatal: n.fatal, retryMs: n.retryMs ?? null },
    });
  }

  private emit(e: TrackerEvent): void {
    this.opts.onEvent?.(e);
  }
}
