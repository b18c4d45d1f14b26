import { flushPromises } from '@vue/test-utils';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { useNoticesStore } from '../stores/notices.ts';
import { mockFetch, problem } from '../testing/fetch-mock.ts';
import { session } from '../testing/fixtures.ts';
import { mountAt } from '../testing/mount.ts';
import ElementSetUpload from './ElementSetUpload.vue';

afterEach(() => {
  vi.unstubAllGlobals();
  document.body.innerHTML = '';
});

describe('adding element sets', () => {
  it('shows the per-entry report of a 422 when no set was usable', async () => {
    const bad = { index: 1, line: 2, ok: false, code: 'checksum', field: 'checksum', column: 69, message: 'checksum digit is 3, the line sums to 7' };
    const { calls } = mockFetch([
      { path: '/api/session', body: session('editor') },
      {
        method: 'POST',
        path: '/api/orgs/org1/satellites/s1/element-sets',
        ...problem(422, 'unprocessable-element-set', 'line 2, column 69: checksum digit is 3, the line sums to 7', {
          errors: [{ where: 'line 2, column 69', message: bad.message, line: 2, column: 69, field: 'checksum' }],
          report: [bad],
        }),
      },
    ]);
    const { wrapper } = await mountAt(ElementSetUpload, '/o/org1/satellites/s1', { org: 'org1', satelliteId: 's1' });
    await wrapper.find('textarea').setValue('KESTREL-1\n1 99901U ...\n2 99901 ...');
    await wrapper.find('form').trigger('submit');
    await flushPromises();
    expect(calls.at(-1)!.body).toEqual({ text: 'KESTREL-1\n1 99901U ...\n2 99901 ...' });
    expect(wrapper.text()).toMatch(/0\s+element sets accepted,\s+1\s+rejected/);
    expect(wrapper.text()).toContain('Line 2, column 69 — Checksum: checksum digit is 3, the line sums to 7');
    expect(wrapper.find('textarea').element.value).toContain('KESTREL-1');
    wrapper.unmount();
  });

  it('sends every dropped file in one multipart request', async () => {
    const { calls } = mockFetch([
      { path: '/api/session', body: session('editor') },
      {
        method: 'POST',
        path: '/api/orgs/org1/satellites/s1/element-sets',
        status: 201,
        body: { accepted: 2, rejected: 0, report: [{ index: 1, line: 1, ok: true, file: 'a.tle' }, { index: 1, line: 1, ok: true, file: 'b.xml' }] },
      },
      { path: '/api/orgs/org1/satellites/s1', body: { satellite: { id: 's1', name: 'Kestrel-1', catalogNumber: '99901', description: null }, current: null, derived: null } },
      { path: '/api/orgs/org1/satellites/s1/element-sets', body: { elementSets: [] } },
    ]);
    const { wrapper } = await mountAt(ElementSetUpload, '/o/org1/satellites/s1', { org: 'org1', satelliteId: 's1' });
    await wrapper.findAll('[role="tab"]')[1]!.trigger('click');
    await flushPromises();
    const files = [new File(['1 ...'], 'a.tle'), new File(['<omm/>'], 'b.xml')];
    const drop = wrapper.find('.drop');
    const dt = { files: files as unknown as FileList };
    const ev = new Event('drop', { bubbles: true, cancelable: true });
    Object.defineProperty(ev, 'dataTransfer', { value: dt });
    drop.element.dispatchEvent(ev);
    await flushPromises();
    expect(wrapper.find('ul.files').text()).toContain('a.tle');
    expect(wrapper.find('ul.files').text()).toContain('b.xml');
    await wrapper.findAll('form')[0]!.trigger('submit');
    await flushPromises();
    const post = calls.find((c) => c.method === 'POST')!;
    expect((post.body as FormData).getAll('files[]').map((f) => (f as File).name)).toEqual(['a.tle', 'b.xml']);
    expect(wrapper.text()).toMatch(/2\s+element sets accepted/);

    // The report is the visible answer; the same words are only read out, not drawn over it.
    expect(useNoticesStore().notices.map((n) => [n.text, n.spokenOnly])).toEqual([['2 element sets accepted, 0 rejected.', true]]);

    // The files are sent: the list empties and the button waits for new files.
    expect(wrapper.find('ul.files').exists()).toBe(false);
    expect(wrapper.find('[data-test="files-sent"]').text()).toContain('Sent a.tle, b.xml');
    const button = wrapper.findAll('button[type="submit"]').find((b) => /check and save/i.test(b.text()))!;
    expect(button.attributes('disabled')).toBeDefined();
    await wrapper.findAll('form')[0]!.trigger('submit');
    await flushPromises();
    expect(calls.filter((c) => c.method === 'POST')).toHaveLength(1);
    wrapper.unmount();
  });

  it('empties the file list after an upload the server refused entirely too', async () => {
    const bad = { index: 1, line: 1, ok: false, code: 'syntax', field: 'xml', message: 'not well-formed XML', file: 'b.xml' };
    const { calls } = mockFetch([
      { path: '/api/session', body: session('editor') },
      { method: 'POST', path: '/api/orgs/org1/satellites/s1/element-sets', ...problem(422, 'unprocessable-element-set', 'No element set was usable.', { report: [bad] }) },
    ]);
    const { wrapper } = await mountAt(ElementSetUpload, '/o/org1/satellites/s1', { org: 'org1', satelliteId: 's1' });
    await wrapper.findAll('[role="tab"]')[1]!.trigger('click');
    await flushPromises();
    const input = wrapper.find<HTMLInputElement>('input[type="file"]');
    Object.defineProperty(input.element, 'files', { value: [new File(['<omm'], 'b.xml')], configurable: true });
    await input.trigger('change');
    expect(wrapper.find('ul.files').text()).toContain('b.xml');
    await wrapper.findAll('form')[0]!.trigger('submit');
    await flushPromises();
    expect(wrapper.find('section.report').text()).toContain('not well-formed XML');
    expect(wrapper.find('ul.files').exists()).toBe(false);
    await wrapper.findAll('form')[0]!.trigger('submit');
    await flushPromises();
    expect(calls.filter((c) => c.method === 'POST')).toHaveLength(1);
    wrapper.unmount();
  });
});
