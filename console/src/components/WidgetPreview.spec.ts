import { flushPromises, mount } from '@vue/test-utils';
import { afterEach, beforeAll, describe, expect, it, vi } from 'vitest';
import { ApiError } from '../api/client.ts';
import { DEFAULT_EMBED_OPTIONS } from '../lib/snippets.ts';
import WidgetPreview from './WidgetPreview.vue';

// A stand-in for the widget served by the server, so the preview counts it as loaded.
beforeAll(() => {
  if (!customElements.get('nadir-track')) customElements.define('nadir-track', class extends HTMLElement {});
});
afterEach(() => vi.useRealTimers());

const base = { satelliteIds: ['sat1'], options: DEFAULT_EMBED_OPTIONS, label: 'Ground track of Sat 1' };

async function mountPreview(props: Record<string, unknown>) {
  const wrapper = mount(WidgetPreview, { props: { ...base, ...props }, attachTo: document.body });
  await flushPromises();
  return wrapper;
}

function widgetError(el: Element, code: string) {
  el.dispatchEvent(new CustomEvent('nadir-error', { detail: { code }, bubbles: true, composed: true }));
}

describe('the live preview', () => {
  it('gives the widget the preview token as its key, on this origin', async () => {
    const w = await mountPreview({ apiKey: 'nlp_token' });
    const el = w.find('nadir-track');
    expect(el.attributes('api-key')).toBe('nlp_token');
    expect(el.attributes('api-base')).toBe(window.location.origin);
    expect(el.attributes('satellites')).toBe('sat1');
    expect(el.attributes('embed')).toBeUndefined();
    w.unmount();
  });

  it('reads through a saved embed when given one', async () => {
    const w = await mountPreview({ embedId: 'emb1', apiKey: 'nlp_token' });
    const el = w.find('nadir-track');
    expect(el.attributes('embed')).toBe('emb1');
    expect(el.attributes('api-key')).toBeUndefined();
    w.unmount();
  });

  it('waits for the token, and says why when it could not be had', async () => {
    const waiting = await mountPreview({});
    expect(waiting.find('nadir-track').exists()).toBe(false);
    expect(waiting.text()).toContain('Loading the preview');
    waiting.unmount();
    const failed = await mountPreview({ credentialError: new ApiError({ status: 404, code: 'not-found', title: 'Not found', detail: 'No such organization among yours.' }) });
    expect(failed.text()).toContain('The preview could not start: No such organization among yours.');
    failed.unmount();
  });

  it('asks for a new token when the widget reports an expired one, at most once in 30 s', async () => {
    vi.useFakeTimers({ toFake: ['Date'] });
    const w = await mountPreview({ apiKey: 'nlp_old' });
    const el = w.find('nadir-track').element;
    widgetError(el, 'rate-limited');
    expect(w.emitted('expired')).toBeUndefined();
    widgetError(el, 'key-expired');
    widgetError(el, 'key-expired');
    expect(w.emitted('expired')).toHaveLength(1);
    vi.setSystemTime(Date.now() + 31_000);
    widgetError(el, 'key-expired');
    expect(w.emitted('expired')).toHaveLength(2);
    w.unmount();
  });
});
