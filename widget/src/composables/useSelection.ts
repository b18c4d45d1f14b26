/**
 * Which satellite the reader picked (a chip or the map): picking it again clears the pick; a new
 * pick dispatches nadir-select with where it is now and its next pass.
 */
import { ref, type Ref } from 'vue';
import { speedKmS } from '../lib/geo.ts';
import type { Pass } from '../lib/api.ts';
import type { SelectDetail } from '../lib/events.ts';
import type { Interpolated } from '../lib/track.ts';
import type { SatState } from '../lib/tracker.ts';

/** A satellite as the widget draws it now: where it is (null when it has no position). */
export interface SatNow {
  sat: SatState;
  here: Interpolated | null;
}

export function useSelection(opts: { sats: Readonly<Ref<readonly SatNow[]>>; now: Readonly<Ref<number>>; dispatch: (type: string, detail: SelectDetail) => void }) {
  const selected = ref<string | null>(null);
  const nextPass = (passes: Pass[] | null): Pass | null => passes?.find((p) => Date.parse(p.set.t) > opts.now.value) ?? null;

  function pick(id: string) {
    selected.value = selected.value === id ? null : id;
    if (!selected.value) return;
    const v = opts.sats.value.find((x) => x.sat.id === id);
    if (!v) return;
    const np = nextPass(v.sat.passes);
    opts.dispatch('nadir-select', {
      id,
      name: v.sat.name,
      lat: v.here?.lat ?? null,
      lon: v.here?.lon ?? null,
      altKm: v.here?.altKm ?? null,
      speedKmS: v.here && v.sat.elements ? speedKmS(v.here.altKm, v.sat.elements.semiMajorAxisKm) : null,
      nextPass: np,
    });
  }
  return { selected, pick, nextPass };
}
