/** "Show passes over me": asks the browser for the reader's place once and hands it to the tracker. */
import { ref, type Ref } from 'vue';
import type { Tracker } from '../lib/tracker.ts';

export function useObserverLocation(tracker: Ref<Tracker | null>) {
  const locating = ref(false);
  const locationNote = ref('');
  function useMyLocation() {
    if (!('geolocation' in navigator)) {
      locationNote.value = 'This browser cannot share a location, so passes cannot be worked out.';
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
        locationNote.value = 'Location not shared. Passes need a place; nothing else changes.';
      },
      { maximumAge: 600_000, timeout: 20_000 },
    );
  }
  return { locating, locationNote, useMyLocation };
}
