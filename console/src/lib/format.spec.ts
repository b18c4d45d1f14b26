import { describe, expect, it } from 'vitest';
import { formatPrice } from './format.ts';

describe('plan prices', () => {
  it('shows whole euros without decimals and other amounts with cents', () => {
    expect(formatPrice(39, 'EUR')).toBe('€39');
    expect(formatPrice(4.5, 'eur')).toBe('€4.50');
    expect(formatPrice(240, 'USD')).toBe('US$240');
  });

  it('falls back to the number and the code when the currency is unknown or missing', () => {
    expect(formatPrice(39, 'nope')).toBe('39 NOPE');
    expect(formatPrice(39, undefined)).toBe('39');
  });
});
