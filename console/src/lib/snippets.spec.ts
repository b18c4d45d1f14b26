import { describe, expect, it } from 'vitest';
import type { EmbedOptions } from '../api/types.ts';
import { DEFAULT_EMBED_OPTIONS, cssLength, iframeSnippet, inlineSnippet, scriptSnippet, widgetAttributes } from './snippets.ts';

const opts = (o: Partial<EmbedOptions> = {}): EmbedOptions => ({ ...DEFAULT_EMBED_OPTIONS, layers: [...DEFAULT_EMBED_OPTIONS.layers], ...o });

describe('embed snippets', () => {
  it('gives the script form of a saved embed: one module script and one element', () => {
    expect(scriptSnippet('https://nadir.example/', 'q7m2c9xk4p', opts({ width: '640', height: '400' }))).toBe(
      '<script type="module" src="https://nadir.example/widget/nadir-track.js"></script>\n' +
        '<nadir-track embed="q7m2c9xk4p" style="display:block;width:640px;height:400px"></nadir-track>',
    );
  });

  it('gives the hosted iframe form with a title for screen readers', () => {
    const s = iframeSnippet('https://nadir.example', 'q7m2c9xk4p', opts(), 'Where Kestrel-1 is now');
    expect(s).toBe(
      '<iframe src="https://nadir.example/embed/q7m2c9xk4p" title="Where Kestrel-1 is now" loading="lazy" style="border:0;display:block;width:100%;height:420px"></iframe>',
    );
  });

  it('writes every non-default option as an attribute in the inline form', () => {
    const s = inlineSnippet('https://nadir.example', ['s1', 's2'], opts({ projection: 'globe', observer: '52.2,0.12,40', theme: 'dark', orbitsAhead: 2, layers: ['passes', 'footprint'] }));
    expect(s).toContain('<script type="module" src="https://nadir.example/widget/nadir-track.js"></script>');
    expect(s).toContain(
      '<nadir-track api-key="nlb_YOUR_BROWSER_KEY" satellites="s1,s2" projection="globe" layers="footprint,passes" observer="52.2,0.12,40" theme="dark" orbits-ahead="2"',
    );
  });

  it('leaves defaults out of the widget attributes', () => {
    expect(widgetAttributes(['s1'], opts({ theme: 'light' }))).toEqual({ satellites: 's1', layers: 'footprint,terminator,graticule,labels' });
  });

  it('escapes values so a name cannot break out of its attribute', () => {
    const s = iframeSnippet('https://nadir.example', 'id', opts(), 'A "quoted" <b>name</b> & more');
    expect(s).toContain('title="A &quot;quoted&quot; &lt;b&gt;name&lt;/b&gt; &amp; more"');
  });

  it('turns bare numbers into pixels and strips characters that could end the style', () => {
    expect(cssLength('640', '1px')).toBe('640px');
    expect(cssLength('80%', '1px')).toBe('80%');
    expect(cssLength('10px;color:red"', '1px')).toBe('10pxcolor:red');
    expect(cssLength('  ', '420px')).toBe('420px');
  });
});
