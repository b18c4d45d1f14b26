import { mount } from '@vue/test-utils';
import { createPinia, setActivePinia } from 'pinia';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { nextTick } from 'vue';
import { useNoticesStore } from '../stores/notices.ts';
import NoticeRegion from './NoticeRegion.vue';

beforeEach(() => {
  vi.useFakeTimers();
  setActivePinia(createPinia());
});
afterEach(() => {
  vi.useRealTimers();
  document.body.innerHTML = '';
});

describe('the toasts', () => {
  it('announce successes politely and errors at once', async () => {
    const w = mount(NoticeRegion, { attachTo: document.body });
    const s = useNoticesStore();
    s.push('Embed saved.');
    s.push('The embed was not saved.', 'error');
    await nextTick();
    expect(w.find('[role="status"][aria-live="polite"]').text()).toContain('Embed saved.');
    expect(w.find('[role="alert"]').text()).toContain('The embed was not saved.');
    w.unmount();
  });

  it('stay while the pointer is on them or focus is in them, then leave', async () => {
    const w = mount(NoticeRegion, { attachTo: document.body });
    const s = useNoticesStore();
    s.push('Key saved.');
    await nextTick();
    await w.find('section').trigger('mouseenter');
    vi.advanceTimersByTime(30_000);
    await nextTick();
    expect(w.text()).toContain('Key saved.');
    await w.find('section').trigger('mouseleave');
    await w.find('button').trigger('focusin');
    vi.advanceTimersByTime(30_000);
    await nextTick();
    expect(w.text()).toContain('Key saved.');
    await w.find('button').trigger('focusout');
    vi.advanceTimersByTime(6000);
    await nextTick();
    expect(w.text()).not.toContain('Key saved.');
    w.unmount();
  });
});
