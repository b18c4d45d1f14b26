import { describe, expect, it } from 'vitest';
import { escapeMarkup } from './markup.ts';

describe('escapeMarkup', () => {
  it('escapes the five markup characters for HTML, the apostrophe as &#39;', () => {
    expect(escapeMarkup(`<a href="x?a=1&b='2'">`)).toBe('&lt;a href=&quot;x?a=1&amp;b=&#39;2&#39;&quot;&gt;');
  });
  it('writes the apostrophe as &apos; for XML', () => {
    expect(escapeMarkup(`O'Neil & <Sons>`, 'xml')).toBe('O&apos;Neil &amp; &lt;Sons&gt;');
  });
  it('leaves other text as it is, escaping an ampersand once', () => {
    expect(escapeMarkup('Ostwick 2 – ÉPOPÉE')).toBe('Ostwick 2 – ÉPOPÉE');
    expect(escapeMarkup('&amp;')).toBe('&amp;amp;');
  });
});
