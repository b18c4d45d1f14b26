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

  it('reads out, without drawing, what the page already shows in place', async () => {
    const w = mount(NoticeRegion, { attachTo: document.body });
    useNoticesStore().push('2 element sets accepted, 0 rejected.', 'success', undefined, { spokenOnly: true });
    await nextTick();
    const said = w.find('[role="status"] .notice');
    expect(said.text()).toContain('2 element sets accepted');
    expect(said.classes()).toContain('sr-only');
    w.unmount();
  });
});
