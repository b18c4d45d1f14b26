/**
 * Write load against the real app over real HTTP on a real SQLite file: many element-set
 * uploaders at once, some of them racing on the same epoch, while an unrelated reader asks for
 * another satellite's position. Used by tests/integration/concurrent-writes.spec.ts (correctness,
 * with a generous reader bound) and by tests/bench/writes.bench.ts (the figures).
 *
 *   const f = await runWriteLoad({ writers: 20, seconds: 15 });
 *   f.status5xx, f.duplicates, f.readerP99Ms, f.flushErrors, ...
 */
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import { QueryTypes } from 'sequelize';
import { leoTle, startKeyedApp } from './app.ts';

export interface WriteLoadOptions {
  writers: number;
  seconds: number;
  /** Simultaneous uploads of one and the same element set before the timed run. */
  sameEpochBurst?: number;
  /** Every n-th upload repeats an epoch another writer may be storing at that moment. */
  repeatEvery?: number;
  /** More configuration for the app (e.g. DATABASE_URL to run the same load on PostgreSQL). */
  env?: Record<string, string>;
}

export interface WriteLoadFigures {
  uploads: number;
  /** Answers by status code (uploads and burst). */
  statuses: Record<string, number>;
  status5xx: number;
  /** Answers 503 `busy` (counted in status5xx too). */
  busy: number;
  /** Rows beyond the first per (satellite, epoch) after the run. */
  duplicates: number;
  /** Rows stored for the burst's one epoch (1 is right). */
  burstRows: number;
  reads: number;
  readerP50Ms: number;
  readerP99Ms: number;
  readerMaxMs: number;
  readerFailures: number;
  /** Error log lines of the usage flush during the run. */
  flushErrors: number;
  /** Requests counted in usage_daily after the final flush, and requests answered. */
  usageCounted: number;
  requestsAnswered: number;
}

/** A request still unanswered after this long counts as failed ('timeout'). */
const REQUEST_TIMEOUT_MS = 30_000;

function percentile(sorted: number[], p: number): number {
  if (sorted.length === 0) return Number.NaN;
  return sorted[Math.min(sorted.length - 1, Math.ceil((p / 100) * sorted.length) - 1)] ?? Number.NaN;
}

export async function runWriteLoad(opts: WriteLoadOptions): Promise<WriteLoadFigures> {
  const t = await startKeyedApp({ USAGE_FLUSH_MS: '200', ...opts.env }, { plan: 'constellation' });
  let flushErrors = 0;
  const logError = t.context.logger.error.bind(t.context.logger);
  t.context.logger.error = ((...args: Parameters<typeof logError>) => {
    if (args.some((a) => typeof a === 'string' && /usage/.test(a))) flushErrors++;
    return logError(...args);
  }) as typeof t.context.logger.error;
  const key = await t.makeKey({ kind: 'server', name: 'Load', scopes: ['read', 'element-sets:write'], rateLimitPerMin: 100_000 });
  const server = http.createServer(t.app);
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  const headers = { Authorization: `Bearer ${key.secret}` };
  const statuses: Record<string, number> = {};
  let busy = 0;
  let answered = 0;
  const upload = async (text: string): Promise<void> => {
    let status: number | string;
    try {
      const res = await fetch(`${base}/v1/satellites/${t.satellites.leo.id}/element-sets`, { method: 'POST', headers: { ...headers, 'Content-Type': 'text/plain' }, body: text, signal: AbortSignal.timeout(REQUEST_TIMEOUT_MS) });
      status = res.status;
      const body = (await res.json()) as { code?: string };
      if (res.status === 503 && body.code === 'busy') busy++;
      answered++;
    } catch (err) {
      status = (err as Error).name === 'TimeoutError' ? 'timeout' : 'network-error';
    }
    statuses[String(status)] = (statuses[String(status)] ?? 0) + 1;
  };

  try {
    const minute = Math.floor(Date.now() / 60_000) * 60_000;
    // Many uploads of one epoch at once.
    const burstEpoch = minute - 30 * 60_000;
    const burstText = leoTle({ epochMs: burstEpoch });
    await Promise.all(Array.from({ length: opts.sameEpochBurst ?? 0 }, () => upload(burstText)));

    // Writers: a shared counter gives each upload a new epoch (one minute apart, further back),
    // and every repeatEvery-th upload repeats the epoch just handed to another writer.
    let counter = 0;
    let uploads = 0;
    const repeatEvery = opts.repeatEvery ?? 3;
    const end = Date.now() + opts.seconds * 1000;
    const writer = async () => {
      while (Date.now() < end) {
        counter++;
        const k = counter % repeatEvery === 0 ? counter - 1 : counter;
        uploads++;
        await upload(leoTle({ epochMs: minute - (60 + k) * 60_000 }));
      }
    };
    const latencies: number[] = [];
    let readerFailures = 0;
    const reader = async () => {
      while (Date.now() < end) {
        const t0 = performance.now();
        try {
          const res = await fetch(`${base}/v1/satellites/${t.satellites.geo.id}/position`, { headers, signal: AbortSignal.timeout(REQUEST_TIMEOUT_MS) });
          await res.arrayBuffer();
          answered++;
          if (res.status !== 200) readerFailures++;
        } catch {
          readerFailures++;
        }
        latencies.push(performance.now() - t0);
        await new Promise((r) => setTimeout(r, 20));
      }
    };
    await Promise.all([...Array.from({ length: opts.writers }, writer), reader()]);

    await t.context.services.usage?.flush();
    const q = <T extends object>(sql: string) => t.context.sequelize.query<T>(sql, { type: QueryTypes.SELECT });
    const dupRows = await q<{ n: number }>('SELECT COUNT(*) AS n FROM element_sets GROUP BY "satelliteId", "epoch" HAVING COUNT(*) > 1');
    const duplicates = dupRows.reduce((s, r) => s + Number(r.n) - 1, 0);
    const burstRows = opts.sameEpochBurst
      ? Number(
          (
            await t.context.sequelize.query<{ n: number }>('SELECT COUNT(*) AS n FROM element_sets WHERE "satelliteId" = :sat AND "rawText" IN (:texts)', {
              type: QueryTypes.SELECT,
              replacements: { sat: t.satellites.leo.id, texts: [burstText, burstText.trim()] },
            })
          )[0]?.n ?? 0,
        )
      : 0;
    const counted = await q<{ n: number }>(`SELECT COALESCE(SUM("count"), 0) AS n FROM usage_daily WHERE "apiKeyId" = '${key.id}'`);
    latencies.sort((a, b) => a - b);
    const status5xx = Object.entries(statuses).filter(([s]) => /^5/.test(s)).reduce((s, [, n]) => s + n, 0);
    return {
      uploads: uploads + (opts.sameEpochBurst ?? 0),
      statuses,
      status5xx,
      busy,
      duplicates,
      burstRows,
      reads: latencies.length,
      readerP50Ms: percentile(latencies, 50),
      readerP99Ms: percentile(latencies, 99),
      readerMaxMs: latencies[latencies.length - 1] ?? Number.NaN,
      readerFailures,
      flushErrors,
      usageCounted: Number(counted[0]?.n ?? 0),
      requestsAnswered: answered,
    };
  } finally {
    server.closeAllConnections();
    await new Promise<void>((resolve) => server.close(() => resolve()));
    await t.close();
  }
}
