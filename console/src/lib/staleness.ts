/**
 * How the console names an element set's state. The words follow the API's `staleness` values
 * (`fresh`, `aging`, `stale`; US spelling, as the API writes it), so a badge, the legend above the
 * list and the API all say the same. `decayed` is not an age class: it is what propagation says
 * of the current set now, and it outranks the age.
 */
import type { Staleness } from '../api/types.ts';

export type SetState = Staleness | 'decayed' | 'none';

export const SET_STATE_LABELS: Record<SetState, string> = {
  fresh: 'Fresh',
  aging: 'Aging',
  stale: 'Stale',
  decayed: 'Decayed',
  none: 'No elements',
};

export const SET_STATE_HINTS: Record<SetState, string> = {
  fresh: 'Recent enough for positions good to a few kilometres.',
  aging: 'Positions drift as a set ages: upload a newer one soon.',
  stale: 'Positions may be off by tens of kilometres or more: upload a new set.',
  decayed: 'SGP4 says the object has decayed by now: it has come down, or the set is wrong. Upload a fresh set if it is still in orbit.',
  none: 'No element set yet: nothing can be shown.',
};

/** Badge class of each state (base.css). */
export const SET_STATE_CLASSES: Record<SetState, string> = {
  fresh: 'ok',
  aging: 'warn',
  stale: 'bad',
  decayed: 'gone',
  none: 'plain',
};

/** The state to show: decayed wins over any age; no current set is 'none'. */
export function setState(staleness: Staleness | null | undefined, decayed = false): SetState {
  if (!staleness) return 'none';
  return decayed ? 'decayed' : staleness;
}
