/** Usage over a chosen range of UTC days, and the month's quota. */
import { defineStore } from 'pinia';
import { computed, ref } from 'vue';
import { api } from '../api/client.ts';
import type { UsageReport } from '../api/types.ts';
import { addDays, isoDay } from '../lib/format.ts';

export const useUsageStore = defineStore('usage', () => {
  const orgId = ref<string | null>(null);
  const to = ref(isoDay(new Date()));
  const from = ref(addDays(to.value, -29));
  const report = ref<UsageReport | null>(null);

  /** Every day of the range, with zero where nothing was counted (the chart needs no gaps). */
  const series = computed(() => {
    const counts = new Map((report.value?.days ?? []).map((d) => [d.day.slice(0, 10), d.count]));
    const out: { day: string; count: number }[] = [];
    for (let d = from.value, n = 0; d <= to.value && n < 400; d = addDays(d, 1), n++) out.push({ day: d, count: counts.get(d) ?? 0 });
    return out;
  });

  /** Ranges of up to this many days are drawn per UTC hour. */
  const HOURLY_MAX_DAYS = 3;
  const days = computed(() => series.value.length);
  const hourly = computed(() => days.value <= HOURLY_MAX_DAYS && (report.value?.hours.length ?? 0) > 0);
  /** Every UTC hour of a short range (the server sends each hour, zero included). */
  const hourSeries = computed(() => (report.value?.hours ?? []).filter((h) => h.hour.slice(0, 10) >= from.value && h.hour.slice(0, 10) <= to.value).map((h) => ({ day: h.hour, count: h.count })));

  const total = computed(() => series.value.reduce((s, d) => s + d.count, 0));
  /** Answers that were errors (4xx, 5xx): they count against the quota like any other. */
  const errors = computed(() => (report.value?.byStatus ?? []).filter((s) => s.status >= 400).reduce((n, s) => n + s.count, 0));

  async function load(org: string) {
    if (orgId.value !== org) report.value = null;
    orgId.value = org;
    report.value = await api.usage(org, from.value, to.value);
  }

  function setRange(f: string, t: string) {
    from.value = f <= t ? f : t;
    to.value = f <= t ? t : f;
  }

  return { orgId, from, to, report, series, hourly, hourSeries, total, errors, load, setRange };
});
