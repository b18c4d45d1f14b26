/**
 * Webhook endpoints and recent deliveries of the current organization (owners and admins). A new
 * or rotated signing secret exists only in `revealed` until the person closes the dialog showing it.
 */
import { defineStore } from 'pinia';
import { computed, ref } from 'vue';
import { api } from '../api/client.ts';
import type { WebhookDelivery, WebhookEndpoint, WebhookEndpointInput, WebhookEndpointList, WebhookEndpointUpdate } from '../api/types.ts';

export interface RevealedWebhookSecret {
  endpoint: WebhookEndpoint;
  secret: string;
  rotated: boolean;
}

export const useWebhooksStore = defineStore('webhooks', () => {
  const orgId = ref<string | null>(null);
  const endpoints = ref<WebhookEndpoint[]>([]);
  const eventTypes = ref<WebhookEndpointList['eventTypes']>([]);
  const maxEndpoints = ref(10);
  const deliveries = ref<WebhookDelivery[]>([]);
  const loaded = ref(false);
  const revealed = ref<RevealedWebhookSecret | null>(null);
  /** Deliveries still being tried: the page polls while there are any. */
  const inFlight = computed(() => deliveries.value.some((d) => d.state === 'pending' || d.state === 'retrying'));

  function reset(org: string) {
    if (orgId.value === org) return;
    orgId.value = org;
    endpoints.value = [];
    deliveries.value = [];
    loaded.value = false;
    revealed.value = null;
  }

  function upsert(e: WebhookEndpoint) {
    const i = endpoints.value.findIndex((x) => x.id === e.id);
    endpoints.value = i === -1 ? [...endpoints.value, e] : endpoints.value.map((x) => (x.id === e.id ? e : x));
  }

  async function load(org: string) {
    reset(org);
    const [list, recent] = await Promise.all([api.webhooks(org), api.webhookDeliveries(org)]);
    endpoints.value = list.endpoints;
    eventTypes.value = list.eventTypes;
    maxEndpoints.value = list.maxEndpoints;
    deliveries.value = recent.deliveries;
    loaded.value = true;
  }

  async function loadDeliveries(org: string) {
    deliveries.value = (await api.webhookDeliveries(org)).deliveries;
  }

  async function create(org: string, input: WebhookEndpointInput) {
    const { endpoint, secret } = await api.createWebhook(org, input);
    upsert(endpoint);
    revealed.value = { endpoint, secret, rotated: false };
  }

  async function update(org: string, id: string, input: WebhookEndpointUpdate) {
    const { endpoint } = await api.updateWebhook(org, id, input);
    upsert(endpoint);
    if (input.paused !== undefined) await loadDeliveries(org);
    return endpoint;
  }

  async function remove(org: string, id: string) {
    await api.deleteWebhook(org, id);
    endpoints.value = endpoints.value.filter((e) => e.id !== id);
    deliveries.value = deliveries.value.filter((d) => d.endpointId !== id);
  }

  async function rotate(org: string, id: string) {
    const { endpoint, secret } = await api.rotateWebhookSecret(org, id);
    upsert(endpoint);
    revealed.value = { endpoint, secret, rotated: true };
  }

  async function sendTest(org: string, id: string) {
    const { delivery } = await api.sendTestWebhook(org, id);
    deliveries.value = [delivery, ...deliveries.value.filter((d) => d.id !== delivery.id)];
  }

  async function redeliver(org: string, id: string) {
    const { delivery } = await api.redeliverWebhook(org, id);
    deliveries.value = [delivery, ...deliveries.value];
  }

  function dismissSecret() {
    revealed.value = null;
  }

  return { orgId, endpoints, eventTypes, maxEndpoints, deliveries, loaded, revealed, inFlight, load, loadDeliveries, create, update, remove, rotate, sendTest, redeliver, dismissSecret };
});
