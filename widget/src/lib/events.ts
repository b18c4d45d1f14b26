/** `detail` of the nadir-select event (see README). */
import type { Pass } from './api.ts';

export interface SelectDetail {
  id: string;
  name: string;
  lat: number | null;
  lon: number | null;
  altKm: number | null;
  speedKmS: number | null;
  /** The next pass over the observer, as /v1 gives it, or null. */
  nextPass: Pass | null;
}
