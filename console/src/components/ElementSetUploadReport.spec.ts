import { mount } from '@vue/test-utils';
import { describe, expect, it } from 'vitest';
import type { UploadReport } from '../api/types.ts';
import ElementSetUploadReport from './ElementSetUploadReport.vue';

const report: UploadReport = {
  accepted: 2,
  rejected: 1,
  report: [
    { index: 1, line: 1, ok: true, elementSetId: 'e1', file: 'kestrel.tle' },
    { index: 2, line: 4, ok: false, code: 'checksum', field: 'checksum', column: 69, message: 'checksum digit is 3, the line sums to 7', file: 'kestrel.tle' },
    { index: 1, line: 1, ok: true, elementSetId: 'e2', file: 'tarnsat.xml' },
  ],
};

describe('the upload report', () => {
  it('counts accepted and rejected sets and marks each entry with its file, line and column', () => {
    const w = mount(ElementSetUploadReport, { props: { report } });
    expect(w.find('[role="status"]').text()).toMatch(/2\s+element sets accepted,\s+1\s+rejected/);
    const rows = w.findAll('tbody tr');
    expect(rows).toHaveLength(3);
    const bad = rows[1]!;
    expect(bad.classes()).toContain('bad');
    expect(bad.text()).toContain('kestrel.tle');
    expect(bad.text()).toContain('line 4, column 69');
    expect(bad.text()).toContain('checksum:');
    expect(bad.text()).toContain('the line sums to 7');
    expect(bad.text()).toContain('Rejected');
    expect(rows[2]!.text()).toContain('tarnsat.xml');
    expect(rows[2]!.text()).toContain('Accepted');
  });

  it('leaves out the file column when the sets were pasted', () => {
    const w = mount(ElementSetUploadReport, { props: { report: { accepted: 0, rejected: 1, report: [{ index: 1, line: 2, ok: false, message: 'line 2 is too short' }] } } });
    expect(w.findAll('th').map((t) => t.text())).toEqual(['#', 'Where', 'Result', 'Details']);
    expect(w.text()).toContain('line 2');
    expect(w.find('.alert').classes()).toContain('error');
  });

  it('does not repeat a field name the message already starts with', () => {
    const w = mount(ElementSetUploadReport, {
      props: { report: { accepted: 0, rejected: 1, report: [{ index: 1, line: 1, ok: false, field: 'eccentricity', message: 'eccentricity: 1.5 must be below 1' }] } },
    });
    expect(w.find('tbody td:last-child').text()).toBe('eccentricity: 1.5 must be below 1');
  });
});
