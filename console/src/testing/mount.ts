/** Mount a component inside the console's real router (memory history) and a fresh Pinia. */
import { mount, flushPromises } from '@vue/test-utils';
import { createPinia, setActivePinia } from 'pinia';
import type { Component } from 'vue';
import { createMemoryHistory } from 'vue-router';
import { createAppRouter } from '../router/index.ts';

export async function mountAt(component: Component, path: string, props: Record<string, unknown> = {}) {
  const pinia = createPinia();
  setActivePinia(pinia);
  const router = createAppRouter(createMemoryHistory());
  await router.push(path);
  await router.isReady();
  const wrapper = mount(component, { props, global: { plugins: [pinia, router] }, attachTo: document.body });
  await flushPromises();
  return { wrapper, router, pinia };
}
