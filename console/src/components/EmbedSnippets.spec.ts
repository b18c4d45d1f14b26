import { RouterLinkStub, flushPromises, mount } from '@vue/test-utils';
import { createPinia, setActivePinia } from 'pinia';
import { describe, expect, it } from 'vitest';
import { DEFAULT_EMBED_OPTIONS } from '../lib/snippets.ts';
import { key } from '../testing/fixtures.ts';
import EmbedSnippets from './EmbedSnippets.vue';

function mountSnippets(embedId: string | null) {
  const pinia = createPinia();
  setActivePinia(pinia);
  return mount(EmbedSnippets, {
    props: {
      origin: 'https://nadir.example',
      org: 'org1',
      embedId,
      name: 'Homepage tracker',
      satelliteIds: ['s1'],
      options: { ...DEFAULT_EMBED_OPTIONS, height: '380' },
      apiKey: key(),
    },
    global: { plugins: [pinia], stubs: { RouterLink: RouterLinkStub } },
  });
}

describe('the snippets of the embed builder', () => {
  it('asks for a save before there is an embed id to paste', () => {
    const w = mountSnippets(null);
    expect(w.text()).toMatch(/Save the embed to get its snippets/);
    expect(w.find('pre').exists()).toBe(false);
  });

  it('shows the script form first, and the iframe and inline forms on their tabs', async () => {
    const w = mountSnippets('q7m2c9xk4p');
    expect(w.find('pre').text()).toBe(
      '<script type="module" src="https://nadir.example/widget/nadir-track.js"></script>\n<nadir-track embed="q7m2c9xk4p" style="display:block;width:100%;height:380px"></nadir-track>',
    );
    const tabs = w.findAll('[role="tab"]');
    expect(tabs.map((t) => t.text())).toEqual(['Script', 'Iframe', 'Inline attributes']);
    await tabs[1]!.trigger('click');
    await flushPromises();
    expect(w.find('pre').text()).toContain('<iframe src="https://nadir.example/embed/q7m2c9xk4p" title="Homepage tracker"');
    expect(w.text()).not.toMatch(/works anywhere|no origin needs listing/i);
    await tabs[2]!.trigger('click');
    await flushPromises();
    expect(w.find('pre').text()).toContain('api-key="nlb_YOUR_BROWSER_KEY" satellites="s1"');
  });

  it('says beside the iframe that it shows only on the key’s origins, and where to add a site', async () => {
    const w = mountSnippets('q7m2c9xk4p');
    await w.findAll('[role="tab"]')[1]!.trigger('click');
    await flushPromises();
    const rule = w.find('[data-test="iframe-origins"]');
    expect(rule.text()).toMatch(/only inside pages from the origins of the embed’s browser key/);
    expect(rule.text()).toContain('“Public website”: https://www.kestrel.example');
    expect(rule.text()).toMatch(/add that site’s origin/);
    expect(rule.findComponent(RouterLinkStub).props('to')).toEqual({ name: 'keys', params: { org: 'org1' } });
  });
});
