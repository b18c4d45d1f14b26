import { describe, expect, it } from 'vitest';
import { observerFields, placeObserver } from './observer.ts';

describe('the embed builder observer', () => {
  it('accepts a place in range, with or without altitude', () => {
    expect(placeObserver({ lat: '51.48', lon: '-0.01', alt: '45' })).toEqual({ ok: true, text: '51.48,-0.01,45' });
    expect(placeObserver({ lat: ' -33.9 ', lon: '151.2', alt: '' })).toEqual({ ok: true, text: '-33.9,151.2' });
  });

  it('refuses a latitude out of range, a longitude that is not a number and empty fields, naming the field', () => {
    expect(placeObserver({ lat: '123', lon: '0', alt: '' })).toMatchObject({ ok: false, field: 'lat' });
    expect(placeObserver({ lat: '10', lon: 'abc', alt: '' })).toMatchObject({ ok: false, field: 'lon', message: expect.stringContaining('“abc”') });
    expect(placeObserver({ lat: '', lon: '', alt: '' })).toMatchObject({ ok: false, field: 'lat' });
    expect(placeObserver({ lat: '10', lon: '181', alt: '' })).toMatchObject({ ok: false, field: 'lon' });
    expect(placeObserver({ lat: '10', lon: '10', alt: 'high' })).toMatchObject({ ok: false, field: 'alt' });
    expect(placeObserver({ lat: '1e2', lon: '0', alt: '' })).toMatchObject({ ok: false, field: 'lat' });
  });

  it('reads a saved observer back into its mode and fields', () => {
    expect(observerFields('auto').mode).toBe('auto');
    expect(observerFields('').mode).toBe('none');
    expect(observerFields('51.48, -0.01').fields).toEqual({ lat: '51.48', lon: '-0.01', alt: '' });
  });
});
