import { mount } from '@vue/test-utils';
import { describe, expect, it } from 'vitest';
import type { Continuity, ElementSetSummary } from '../api/types.ts';
import ElementSetHistory from './ElementSetHistory.vue';
import ElementSetUploadReport from './ElementSetUploadReport.vue';

const manoeuvre: Continuity = {
  classification: 'manoeuvre',
  summary: 'orbit raised or lowered (manoeuvre likely)',
  reason: 'Same plane, but the orbit was raised: semi-major axis +20.07 km.',
  previousElementSetId: 'e1',
  previousEpoch: '2026-11-20T00:00:00.000000Z',
  spanDays: 3,
  positionDifferenceKm: 20.074,
  radialKm: -20.074,
  alongTrackKm: 0.034,
  crossTrackKm: 0.001,
  alongTrackTimingS: 0,
  semiMajorAxisChangeKm: 20.071,
  eccentricityChange: 0,
  inclinationChangeDeg: 0,
  raanChangeDeg: 0,
  catalogNumberChanged: false,
};
const base = { source: 'tle', ageDays: 1, staleness: 'fresh' as const, uploadedBy: 'Ada', createdAt: '2026-11-23T00:00:00.000Z', catalogNumber: '99850', name: 'X', awaitingConfirmation: false };
const sets: ElementSetSummary[] = [
  { ...base, id: 'e3', epoch: '2026-11-24T00:00:00.000000Z', continuity: { ...manoeuvre, classification: 'does-not-continue', summary: 'does not continue' }, awaitingConfirmation: true },
  { ...base, id: 'e2', epoch: '2026-11-23T00:00:00.000000Z', continuity: manoeuvre },
  { ...base, id: 'e1', epoch: '2026-11-20T00:00:00.000000Z', continuity: null },
];

describe('the element-set history', () => {
  it('shows each set\u2019s continuity class with its figures in km and s', () => {
    const w = mount(ElementSetHistory, { props: { org: 'o', sets, currentId: 'e2', canConfirm: true } });
    const rows = w.findAll('tbody tr');
    expect(rows[1]!.find('td.continuity').text()).toContain('Manoeuvre likely');
    expect(rows[1]!.find('td.continuity').text()).toContain('20.1 km from the previous set');
    expect(rows[1]!.find('td.continuity').text()).toContain('radial -20.1 km');
    expect(rows[2]!.find('td.continuity').text()).toContain('first set');
  });

  it('offers editors the confirm action on a held set only, and emits it', async () => {
    const w = mount(ElementSetHistory, { props: { org: 'o', sets, currentId: 'e2', canConfirm: true } });
    const buttons = w.findAll('button').filter((b) => b.text().startsWith('Confirm'));
    expect(buttons).toHaveLength(1);
    expect(w.findAll('tbody tr')[0]!.text()).toContain('Held: not in use');
    await buttons[0]!.trigger('click');
    expect(w.emitted('confirm')).toEqual([['e3']]);
    const viewer = mount(ElementSetHistory, { props: { org: 'o', sets, currentId: 'e2', canConfirm: false } });
    expect(viewer.findAll('button').filter((b) => b.text().startsWith('Confirm'))).toHaveLength(0);
  });

  it('the upload report says the continuity and whether the set is held', () => {
    const w = mount(ElementSetUploadReport, {
      props: { report: { accepted: 1, rejected: 0, report: [{ index: 1, line: 1, ok: true, elementSetId: 'e3', continuity: manoeuvre, awaitingConfirmation: true }] } },
    });
    const details = w.find('td.details').text();
    expect(details).toContain('Manoeuvre likely');
    expect(details).toContain('semi-major axis +20.07 km');
    expect(details).toContain('Held until an editor confirms it');
  });
});
