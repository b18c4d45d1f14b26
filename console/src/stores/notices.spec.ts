import { createPinia, setActivePinia } from 'pinia';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { useNoticesStore } from './notices.ts';

beforeEach(() => {
  vi.useFakeTimers();
  setActivePinia(createPinia());
});
afterEach(() => {
  vi.useRealTimers();
});

const texts = () => useNoticesStore().notices.map((n) => n.text);

describe('notices', () => {
  it('leave by themselves after 6 s, and errors after 12 s', () => {
    const s = useNoticesStore();
    s.push('Key saved.');
    s.push('The key was not saved.', 'error');
    vi.advanceTimersByTime(5999);
    expect(texts()).toEqual(['Key saved.', 'The key was not saved.']);
    vi.advanceTimersByTime(1);
    expect(texts()).toEqual(['The key was not saved.']);
    vi.advanceTimersByTime(6000);
    expect(texts()).toEqual([]);
  });

  it('stay while held (pointer or focus on them) and get back the time they had left', () => {
    const s = useNoticesStore();
    s.push('Embed saved.');
    vi.advanceTimersByTime(1000);
    s.hold();
    vi.advanceTimersByTime(60_000);
    expect(texts()).toEqual(['Embed saved.']);
    s.push('Second one.');
    vi.advanceTimersByTime(60_000);
    expect(texts()).toEqual(['Embed saved.', 'Second one.']);
    s.release();
    vi.advanceTimersByTime(4999);
    expect(texts()).toEqual(['Embed saved.', 'Second one.']);
    vi.advanceTimersByTime(1);
    expect(texts()).toEqual(['Second one.']);
    vi.advanceTimersByTime(1000);
    expect(texts()).toEqual([]);
  });

  it('keep at most three, the oldest leaving first', () => {
    const s = useNoticesStore();
    for (const t of ['one', 'two', 'three', 'four']) s.push(t);
    expect(texts()).toEqual(['two', 'three', 'four']);
    s.dismiss(s.notices[0]!.id);
    expect(texts()).toEqual(['three', 'four']);
  });
});
