import { describe, expect, it } from 'vitest';
import { pageViews, REQUESTS_PER_TYPICAL_VIEW, statusLabel } from './usage.ts';

describe('usage words', () => {
  it('names statuses in plain words', () => {
    expect(statusLabel(200)).toBe('200 OK');
    expect(statusLabel(429)).toBe('429 Rate-limited or quota reached');
    expect(statusLabel(418)).toBe('418 Error');
  });
  it('turns requests into page views of a typical embed', () => {
    expect(REQUESTS_PER_TYPICAL_VIEW).toBe(6);
    expect(pageViews(10_000)).toBe(1666);
    expect(pageViews(5, 6)).toBe(0);
  });
});
