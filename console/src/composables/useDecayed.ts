/**
 * Which satellites SGP4 says have decayed by now. The console API's satellite answers carry no such
 * flag (only the age class), so this asks `/v1/positions` with the console preview token, the same
 * read the live previews make: a satellite whose position answers `error.code: 'decayed'` is shown
 * as decayed. Anything else (no token yet, a network failure, a refusal) shows nothing rather
 * than a guess.
 *
 *   const decay = useDecayed(() => props.org, () => ids);
 *   decay.decayed.value.has(id)
 */
import { shallowRef, toValue, watch, type MaybeRefOrGetter } from 'vue';
import { usePreviewToken } from './usePreviewToken.ts';

/** `/v1/positions` takes at most this many ids per call (docs/api). */
export const POSITIONS_MAX_IDS = 50;

interface PositionsAnswer {
  positions?: { id?: string; error?: { code?: string } }[];
}

async function decayedAmong(ids: readonly string[], token: string): Promise<Set<string>> {
  const out = new Set<string>();
  for (let i = 0; i < ids.length; i += POSITIONS_MAX_IDS) {
    const chunk = ids.slice(i, i + POSITIONS_MAX_IDS);
    const res = await fetch(`/v1/positions?ids=${encodeURIComponent(chunk.join(','))}`, {
      headers: { authorization: `Bearer ${token}`, accept: 'application/json' },
      credentials: 'same-origin',
    });
    if (!res.ok) continue;
    const body = (await res.json()) as PositionsAnswer;
    for (const p of body.positions ?? []) if (p.id && p.error?.code === 'decayed') out.add(p.id);
  }
  return out;
}

/** `version`: anything that changes when the answer may have (e.g. the current set's id); asks again then. */
export function useDecayed(org: MaybeRefOrGetter<string | null | undefined>, ids: MaybeRefOrGetter<readonly string[]>, version?: MaybeRefOrGetter<unknown>) {
  const preview = usePreviewToken(org);
  const decayed = shallowRef<ReadonlySet<string>>(new Set());
  let run = 0;
  watch(
    [() => preview.token.value, () => [...toValue(ids)].sort().join(','), () => toValue(version)],
    async ([token, joined]) => {
      const mine = ++run;
      if (!token || !joined) {
        decayed.value = new Set();
        return;
      }
      try {
        const found = await decayedAmong(joined.split(','), token);
        if (mine === run) decayed.value = found;
      } catch {
        // No answer, no claim: the badges keep showing the age class only.
      }
    },
    { immediate: true },
  );
  return { decayed };
}
