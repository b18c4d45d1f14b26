/** The organization's activity log, newest first, fetched a page at a time. */
import { defineStore } from 'pinia';
import { ref } from 'vue';
import { api } from '../api/client.ts';
import type { ActivityEvent } from '../api/types.ts';

const PAGE = 50;

export const useActivityStore = defineStore('activity', () => {
  const orgId = ref<string | null>(null);
  const events = ref<ActivityEvent[]>([]);
  const loaded = ref(false);
  const more = ref(false);

  async function load(org: string) {
    orgId.value = org;
    const r = await api.activity(org, undefined, PAGE);
    events.value = r.events;
    more.value = r.events.length === PAGE;
    loaded.value = true;
  }

  async function loadMore() {
    const last = events.value.at(-1);
    if (!orgId.value || !last) return;
    const r = await api.activity(orgId.value, last.id, PAGE);
    events.value = [...events.value, ...r.events];
    more.value = r.events.length === PAGE;
  }

  return { orgId, events, loaded, more, load, loadMore };
});
