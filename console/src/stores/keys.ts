/**
 * API keys of the current organization. A new key's full text exists only in `revealed` until
 * the person closes the dialog that shows it; it is never stored anywhere else.
 */
import { defineStore } from 'pinia';
import { ref } from 'vue';
import { api } from '../api/client.ts';
import type { ApiKey, KeyCreateInput, KeyRotateInput, KeyUpdateInput } from '../api/types.ts';

export interface RevealedSecret {
  key: ApiKey;
  secret: string;
  /** After a rotation: the replaced key (it retires when quiet) and how many embeds moved to the new one. */
  previous?: ApiKey;
  embedsMoved?: number;
}

export const useKeysStore = defineStore('keys', () => {
  const orgId = ref<string | null>(null);
  const keys = ref<ApiKey[]>([]);
  const loaded = ref(false);
  const revealed = ref<RevealedSecret | null>(null);

  function reset(org: string) {
    if (orgId.value === org) return;
    orgId.value = org;
    keys.value = [];
    loaded.value = false;
    revealed.value = null;
  }

  function upsert(k: ApiKey) {
    const i = keys.value.findIndex((x) => x.id === k.id);
    keys.value = i === -1 ? [k, ...keys.value] : keys.value.map((x) => (x.id === k.id ? k : x));
  }

  async function load(org: string) {
    reset(org);
    keys.value = (await api.keys(org)).keys;
    loaded.value = true;
  }

  async function create(org: string, input: KeyCreateInput): Promise<RevealedSecret> {
    reset(org);
    const { key, secret } = await api.createKey(org, input);
    upsert(key);
    revealed.value = { key, secret };
    return revealed.value;
  }

  async function update(org: string, id: string, input: KeyUpdateInput) {
    const { key } = await api.updateKey(org, id, input);
    upsert(key);
    return key;
  }

  async function rotate(org: string, id: string, input: KeyRotateInput): Promise<RevealedSecret> {
    const { key, secret, previous, embedsMoved } = await api.rotateKey(org, id, input);
    upsert(previous);
    upsert(key);
    revealed.value = { key, secret, previous, embedsMoved };
    return revealed.value;
  }

  async function revoke(org: string, id: string) {
    const { key } = await api.revokeKey(org, id);
    upsert(key);
    return key;
  }

  async function remove(org: string, id: string) {
    await api.deleteKey(org, id);
    keys.value = keys.value.filter((x) => x.id !== id);
  }

  /** The person has copied (or chosen not to copy) the secret: forget it for good. */
  function dismissSecret() {
    revealed.value = null;
  }

  return { orgId, keys, loaded, revealed, load, create, update, rotate, revoke, remove, dismissSecret };
});
