import { mount } from '@vue/test-utils';
import { describe, expect, it } from 'vitest';
import type { UploadReport } from '../api/types.ts';
import ElementSetUploadReport from './ElementSetUploadReport.vue';

const report: UploadReport = {
  accepted: 2,
  rejected: 1,
  report: [
    { index: 1, line: 1, ok: true, elementSetId: 'e1', file: 'kestrel.tle' },
    { index: 2, line: 4, ok: false, code: 'checksum', field: 'checksum', column: 69, message: 'checksum: line 4 column 69: expected 3, found 7', file: 'kestrel.tle' },
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
    expect(bad.find('td.details').text()).toBe('Line 4, column 69 — Checksum: expected 3, found 7');
    expect(bad.text()).toContain('Rejected');
    expect(rows[0]!.find('td.details').text()).toBe('Line 1 — saved');
    expect(rows[2]!.text()).toContain('tarnsat.xml');
    expect(rows[2]!.text()).toContain('Accepted');
  });

  it('leaves out the file column when the sets were pasted', () => {
    const w = mount(ElementSetUploadReport, { props: { report: { accepted: 0, rejected: 1, report: [{ index: 1, line: 2, ok: false, message: 'line 2 is too short' }] } } });
    expect(w.findAll('th').map((t) => t.text())).toEqual(['#', 'Result', 'Details']);
    expect(w.find('td.details').text()).toBe('Line 2 — line 2 is too short');
    expect(w.find('.alert').classes()).toContain('error');
  });

  it('does not repeat a field name or a place the message already starts with', () => {
    const w = mount(ElementSetUploadReport, {
      props: { report: { accepted: 0, rejected: 1, report: [{ index: 1, line: 1, ok: false, field: 'eccentricity', message: 'eccentricity: 1.5 must be below 1' }] } },
    });
    expect(w.find('tbody td:last-child').text()).toBe('Line 1 — Eccentricity: 1.5 must be below 1');
  });

  it('gives no raw field name for problems of the whole text, and one place however the server put it', () => {
    const entry = { index: 1, line: 1, column: 1, ok: false, field: 'text', file: 'bad.txt', message: 'bad.txt, line 1, column 1: text: line 1 column 1: this line belongs to no element set' };
    const w = mount(ElementSetUploadReport, { props: { report: { accepted: 0, rejected: 1, report: [entry] } } });
    expect(w.find('td.details').text()).toBe('Line 1, column 1 — this line belongs to no element set');
    expect(w.text()).not.toMatch(/text:|line2:/);
  });

  it('names TLE lines and OMM keywords as people read them, and marks duplicates', () => {
    const w = mount(ElementSetUploadReport, {
      props: {
        report: {
          accepted: 1,
          rejected: 2,
          report: [
            { index: 1, line: 3, column: 1, ok: false, field: 'line2', message: 'line2: line 3 column 1: TLE line 2 is missing (expected after line 1)' },
            { index: 2, line: 9, ok: false, field: 'MEAN_MOTION', message: 'MEAN_MOTION: line 9: must be a number' },
            { index: 3, line: 12, ok: true, duplicate: true },
          ],
        },
      },
    });
    expect(w.findAll('td.details').map((d) => d.text())).toEqual([
      'Line 3, column 1 — TLE line 2: TLE line 2 is missing (expected after line 1)',
      'Line 9 — MEAN_MOTION: must be a number',
      'Line 12 — saved (the same as a set already held)',
    ]);
  });
});
