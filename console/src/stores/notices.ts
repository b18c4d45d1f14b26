/** Short messages about finished actions, read out by the polite live region in the shell. */
import { defineStore } from 'pinia';
import { ref } from 'vue';

export interface Notice {
  id: number;
  kind: 'success' | 'error' | 'info';
  text: string;
}

export const useNoticesStore = defineStore('notices', () => {
  const notices = ref<Notice[]>([]);
  let next = 1;

  function push(text: string, kind: Notice['kind'] = 'success', ttlMs = 6000): number {
    const id = next++;
    notices.value = [...notices.value.slice(-3), { id, kind, text }];
    if (ttlMs > 0) setTimeout(() => dismiss(id), ttlMs);
    return id;
  }

  function dismiss(id: number) {
    notices.value = notices.value.filter((n) => n.id !== id);
  }

  return { notices, push, dismiss };
});
