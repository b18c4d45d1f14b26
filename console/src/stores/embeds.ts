/** Saved embeds of the current organization. */
import { defineStore } from 'pinia';
import { ref } from 'vue';
import { api } from '../api/client.ts';
import type { Embed, EmbedInput } from '../api/types.ts';
import { DEFAULT_EMBED_OPTIONS } from '../lib/snippets.ts';

/** Fill options a saved embed may lack (older embeds, or ones made through the API). */
export function normalizeEmbed(e: Embed): Embed {
  const o = { ...DEFAULT_EMBED_OPTIONS, ...(e.options ?? {}) };
  return { ...e, satelliteIds: e.satelliteIds ?? [], options: { ...o, width: String(o.width), height: String(o.height), layers: [...(o.layers ?? [])] } };
}

export const useEmbedsStore = defineStore('embeds', () => {
  const orgId = ref<string | null>(null);
  const embeds = ref<Embed[]>([]);
  const loaded = ref(false);

  function reset(org: string) {
    if (orgId.value === org) return;
    orgId.value = org;
    embeds.value = [];
    loaded.value = false;
  }

  async function load(org: string) {
    reset(org);
    embeds.value = (await api.embeds(org)).embeds.map(normalizeEmbed);
    loaded.value = true;
  }

  async function save(org: string, input: EmbedInput, id?: string): Promise<Embed> {
    reset(org);
    const { embed } = id ? await api.updateEmbed(org, id, input) : await api.createEmbed(org, input);
    const e = normalizeEmbed(embed);
    embeds.value = id ? embeds.value.map((x) => (x.id === id ? e : x)) : [e, ...embeds.value];
    return e;
  }

  async function remove(org: string, id: string) {
    await api.deleteEmbed(org, id);
    embeds.value = embeds.value.filter((e) => e.id !== id);
  }

  return { orgId, embeds, loaded, load, save, remove };
});
