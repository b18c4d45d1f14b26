/** Satellites of the current organization, their element sets and upload reports. */
import { defineStore } from 'pinia';
import { ref } from 'vue';
import { api } from '../api/client.ts';
import type { Derived, ElementSetSummary, KeplerInput, Satellite, SatelliteListItem, UploadReport } from '../api/types.ts';

export interface SatelliteDetail {
  satellite: Satellite;
  current: ElementSetSummary | null;
  derived: Derived | null;
  history: ElementSetSummary[];
}

export type ElementSetInput = { text: string } | { kepler: KeplerInput } | { files: File[] };

export const useSatellitesStore = defineStore('satellites', () => {
  const orgId = ref<string | null>(null);
  const list = ref<SatelliteListItem[]>([]);
  const loaded = ref(false);
  const detail = ref<SatelliteDetail | null>(null);
  /** The last upload's per-entry report, shown until the next upload. */
  const lastReport = ref<UploadReport | null>(null);

  function reset(org: string) {
    if (orgId.value === org) return;
    orgId.value = org;
    list.value = [];
    loaded.value = false;
    detail.value = null;
    lastReport.value = null;
  }

  async function load(org: string): Promise<void> {
    reset(org);
    const { satellites } = await api.satellites(org);
    list.value = satellites;
    loaded.value = true;
  }

  async function loadDetail(org: string, id: string): Promise<SatelliteDetail> {
    reset(org);
    if (detail.value?.satellite.id !== id) lastReport.value = null;
    const [one, sets] = await Promise.all([api.satellite(org, id), api.elementSets(org, id)]);
    detail.value = { satellite: one.satellite, current: one.current, derived: one.derived, history: sets.elementSets };
    return detail.value;
  }

  async function register(org: string, input: { name: string; description?: string; elements?: string }) {
    reset(org);
    const res = await api.createSatellite(org, input);
    list.value = [...list.value, { ...res.satellite, current: null, derived: null }];
    if (res.report) lastReport.value = { report: res.report, accepted: res.report.filter((r) => r.ok).length, rejected: res.report.filter((r) => !r.ok).length };
    return res;
  }

  /**
   * Send element sets. A 422 (nothing accepted) still carries a report in the problem body's
   * `errors`; the caller shows it through `reportFromProblem`.
   */
  async function addElementSets(org: string, id: string, input: ElementSetInput): Promise<UploadReport> {
    lastReport.value = null;
    const report = await api.addElementSets(org, id, input);
    if (report.accepted > 0) await loadDetail(org, id);
    lastReport.value = report;
    return report;
  }

  function showReport(report: UploadReport | null) {
    lastReport.value = report;
  }

  /** An editor lets a held set be used; the detail reloads (it may have become current). */
  async function confirmSet(org: string, satelliteId: string, elementSetId: string) {
    await api.confirmElementSet(org, elementSetId);
    await loadDetail(org, satelliteId);
  }

  async function update(org: string, id: string, input: { name?: string; description?: string }) {
    const { satellite } = await api.updateSatellite(org, id, input);
    if (detail.value?.satellite.id === id) detail.value = { ...detail.value, satellite };
    list.value = list.value.map((s) => (s.id === id ? { ...s, ...satellite } : s));
  }

  async function remove(org: string, id: string) {
    await api.deleteSatellite(org, id);
    list.value = list.value.filter((s) => s.id !== id);
    if (detail.value?.satellite.id === id) detail.value = null;
  }

  return { orgId, list, loaded, detail, lastReport, load, loadDetail, register, addElementSets, showReport, confirmSet, update, remove };
});
