/**
 * "Show passes over me": asks the browser for the reader's place once and hands it to the tracker.
 * `locationNote` says why there is no place ('no-geolocation', 'refused'; '' when none is needed),
 * for the element to say in the reader's words.
 */
import { ref, type Ref } from 'vue';
import type { Tracker } from '../lib/tracker.ts';

export function useObserverLocation(tracker: Ref<Tracker | null>) {
  const locating = ref(false);
  const locationNote = ref<'' | 'no-geolocation' | 'refused'>('');
  function useMyLocation() {
    if (!('geolocation' in navigator)) {
      locationNote.value = 'no-geolocation';
      return;
    }
    locating.value = true;
    navigator.geolocation.getCurrentPosition(
      (pos) => {
        locating.value = false;
        locationNote.value = '';
        tracker.value?.setObserver({ lat: pos.coords.latitude, lon: pos.coords.longitude, altM: pos.coords.altitude ?? 0 });
      },
      () => {
        locating.value = false;
        locationNote.value = 'refused';
      },
      { maximumAge: 600_000, timeout: 20_000 },
    );
  }
  return { locating, locationNote, useMyLocation };
}
