/**
 * The map's box. Its preferred height is the map's own shape at the box width (flex-basis), so an
 * element of auto height wraps the map snugly; an element given a height (the console preview, the
 * hosted embed page) lets the box grow or shrink to the room left by the controls, pass list and
 * notes, and the map fits itself into it.
 */
import { onBeforeUnmount, onMounted, ref } from 'vue';

export function useMapBox() {
  const mapbox = ref<HTMLElement | null>(null);
  const width = ref(640);
  const boxHeight = ref<number | null>(null);
  let resizer: ResizeObserver | undefined;
  onMounted(() => {
    if (typeof ResizeObserver === 'function' && mapbox.value) {
      resizer = new ResizeObserver((entries) => {
        const r = entries[0]?.contentRect;
        if (!r) return;
        if (r.width && Math.abs(r.width - width.value) >= 1) width.value = Math.max(200, Math.floor(r.width));
        if (r.height) boxHeight.value = Math.floor(r.height);
      });
      resizer.observe(mapbox.value);
    }
    if (mapbox.value) {
      const r = mapbox.value.getBoundingClientRect();
      width.value = Math.max(200, Math.floor(r.width || 640));
      if (r.height) boxHeight.value = Math.floor(r.height);
    }
  });
  onBeforeUnmount(() => resizer?.disconnect());
  return { mapbox, width, boxHeight };
}
