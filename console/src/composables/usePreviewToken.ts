/**
 * The credential of the console's live previews: a console preview token (docs/console-api.md
 * "Live previews") that `<nadir-track>` takes as `api-key`. Any member gets one, so previews are
 * live for every satellite and every unsaved embed, without a saved embed and without a key.
 *
 *   const preview = usePreviewToken(() => props.org);
 *   preview.token.value   // '' until the first one arrives
 *   preview.error.value   // ApiError | null when the last fetch failed
 *
 * One token per organization is shared by every preview on the page. It is fetched again
 * REFRESH_MARGIN_MS before it expires (by the lifetime the server states, so this computer's clock
 * does not matter), when the tab comes back into view after its refresh time passed, and after
 * RETRY_MS when a fetch failed for a reason that may pass (network, 429, 5xx). No timer runs while
 * no preview is shown. Signing out forgets every token (forgetPreviewTokens).
 */
import { computed, onScopeDispose, shallowRef, toValue, watch, type MaybeRefOrGetter, type ShallowRef } from 'vue';
import { api, ApiError } from '../api/client.ts';

export const REFRESH_MARGIN_MS = 3 * 60_000;
export const RETRY_MS = 30_000;

interface Entry {
  token: ShallowRef<string>;
  error: ShallowRef<ApiError | null>;
  /** Local time (ms) of the next fetch; Infinity after a failure that waiting will not mend. */
  refreshAt: number;
  users: number;
  timer: ReturnType<typeof setTimeout> | undefined;
  inflight: Promise<void> | undefined;
}

const entries = new Map<string, Entry>();
let listening = false;

function entryFor(org: string): Entry {
  let e = entries.get(org);
  if (!e) {
    e = { token: shallowRef(''), error: shallowRef(null), refreshAt: 0, users: 0, timer: undefined, inflight: undefined };
    entries.set(org, e);
  }
  return e;
}

function retryable(err: ApiError): boolean {
  return err.status === 0 || err.status === 429 || err.status >= 500;
}

function schedule(org: string, e: Entry): void {
  clearTimeout(e.timer);
  e.timer = undefined;
  if (e.users > 0 && Number.isFinite(e.refreshAt)) e.timer = setTimeout(() => void fetchToken(org, e), Math.max(0, e.refreshAt - Date.now()));
}

function fetchToken(org: string, e: Entry): Promise<void> {
  e.inflight ??= (async () => {
    try {
      const r = await api.previewToken(org);
      const lifetimeMs = Number.isFinite(r.expiresIn) ? r.expiresIn * 1000 : Date.parse(r.expiresAt) - Date.now();
      e.token.value = r.token;
      e.error.value = null;
      e.refreshAt = Date.now() + Math.max(lifetimeMs - REFRESH_MARGIN_MS, lifetimeMs / 2);
    } catch (err) {
      const apiErr = err instanceof ApiError ? err : new ApiError({ status: 0, code: 'client', title: 'The preview could not start', detail: String(err) });
      e.error.value = apiErr;
      e.refreshAt = retryable(apiErr) ? Date.now() + RETRY_MS : Infinity;
    } finally {
      e.inflight = undefined;
      if (entries.get(org) === e) schedule(org, e);
    }
  })();
  return e.inflight;
}

/** Fetch now when the refresh time has passed; true when a fetch is on its way. */
function ensure(org: string, e: Entry): boolean {
  if (e.inflight) return true;
  if (Date.now() < e.refreshAt) return false;
  void fetchToken(org, e);
  return true;
}

function onVisible(): void {
  if (typeof document !== 'undefined' && document.visibilityState === 'hidden') return;
  for (const [org, e] of entries) if (e.users > 0) ensure(org, e);
}

export function usePreviewToken(org: MaybeRefOrGetter<string | null | undefined>) {
  const entry = shallowRef<Entry | null>(null);
  let held: { org: string; e: Entry } | null = null;

  function release() {
    if (!held) return;
    held.e.users -= 1;
    if (held.e.users <= 0) {
      clearTimeout(held.e.timer);
      held.e.timer = undefined;
    }
    held = null;
  }

  const stop = watch(
    () => toValue(org) ?? '',
    (o) => {
      release();
      entry.value = null;
      if (!o) return;
      const e = entryFor(o);
      e.users += 1;
      // A new preview tries again after a failure that was not worth retrying on its own.
      if (e.error.value && !Number.isFinite(e.refreshAt)) e.refreshAt = 0;
      held = { org: o, e };
      entry.value = e;
      if (!ensure(o, e)) schedule(o, e);
      if (!listening && typeof document !== 'undefined') {
        document.addEventListener('visibilitychange', onVisible);
        listening = true;
      }
    },
    { immediate: true },
  );
  onScopeDispose(() => {
    stop();
    release();
  });

  return {
    token: computed(() => entry.value?.token.value ?? ''),
    error: computed(() => entry.value?.error.value ?? null),
    /** Fetch a new token now (e.g. after the widget reported an expired one). */
    refresh: () => (held ? fetchToken(held.org, held.e) : Promise.resolve()),
  };
}

/** Forget every token and stop their timers (sign-out, session ended). */
export function forgetPreviewTokens(): void {
  for (const e of entries.values()) clearTimeout(e.timer);
  entries.clear();
}
