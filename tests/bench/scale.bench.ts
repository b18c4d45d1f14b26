/**
 * Beyond one process, side by side in one run, with autocannon on 127.0.0.1:
 *   1. the bare Express 5 route (its own process, as in server.bench.ts),
 *   2. keyed GET /v1/satellites/{id}/position on one server process on PostgreSQL with Redis
 *      (the rate limit and the usage and quota counts go to Redis on every request),
 *   3. the same spread over two server processes on the same database and Redis.
 * Goals: Redis-backed /position at 0.5 of the bare route or better. Two processes against one is
 * reported (on a two-core machine little gain is expected; the point is that it is correct).
 * Needs PostgreSQL and Redis (tests/support/stores.ts); without them it says so and stops.
 */
import autocannon from 'autocannon';
import pg from 'pg';
import { startServer, type StartedServer } from '../support/server.ts';
import { storesReachable, testStores } from '../support/stores.ts';
import { startBare } from './server.bench.ts';

const WARMUP_S = 2;
const DURATION_S = Number(process.env.BENCH_SECONDS ?? 5);
const ROUNDS = 3;
const CONNECTIONS = 16;

interface Figures {
  name: string;
  reqPerSec: number;
  p99Ms: number;
  non2xx: number;
}

async function cannon(name: string, urls: string[], headers: Record<string, string>, seconds: number): Promise<Figures> {
  // autocannon spreads the connections over several URLs when given a list (its types say one).
  const result = await autocannon({ url: (urls.length === 1 ? urls[0] : urls) as string, headers, connections: CONNECTIONS, duration: seconds, pipelining: 1 });
  return { name, reqPerSec: result.requests.average, p99Ms: result.latency.p99, non2xx: result.non2xx + result.errors + result.timeouts };
}

export async function run(): Promise<void> {
  const reachable = await storesReachable();
  if (!reachable.ok) {
    console.log(`SKIPPED: ${reachable.why}; this benchmark needs PostgreSQL and Redis (NL_TEST_PG_URL, NL_TEST_REDIS_URL)`);
    return;
  }
  const stores = await testStores({ force: true });
  const servers: StartedServer[] = [];
  let bare: { stop: () => void } | undefined;
  try {
    // Seed the demo once (development), then raise the server key's limit and the plan.
    const seeding = await startServer({ stores, keepStores: true, env: { LOG_LEVEL: 'warn' } });
    const { serverKey, satellites } = seeding.credentials;
    await seeding.stop();
    const db = new pg.Client({ connectionString: stores.databaseUrl ?? '' });
    await db.connect();
    await db.query(`UPDATE api_keys SET "rateLimitPerMin" = 100000000 WHERE "kind" = 'server'`);
    await db.query(`UPDATE organizations SET "plan" = 'constellation'`);
    await db.end();

    // Production mode as deployed: a real relay would be named (this one is never contacted).
    const env = { LOG_LEVEL: 'warn', NODE_ENV: 'production', SESSION_SECRET: 'bench-session-secret-0123456789', DEMO: 'false', SMTP_URL: 'smtp://127.0.0.1:9' };
    servers.push(...(await Promise.all([0, 1].map(() => startServer({ stores, keepStores: true, env })))));
    const started = await startBare();
    bare = started;
    const id = satellites.find((s) => s.name.startsWith('Orrery'))?.id ?? satellites[0]!.id;
    const auth = { Authorization: `Bearer ${serverKey}` };
    const path = `/v1/satellites/${id}/position`;
    const targets = [
      { name: 'bare Express route', urls: [`http://127.0.0.1:${started.port}/bare`], headers: {} },
      { name: 'keyed /position, Redis, 1 process', urls: [`${servers[0]!.url}${path}`], headers: auth },
      { name: 'keyed /position, Redis, 2 processes', urls: servers.map((s) => `${s.url}${path}`), headers: auth },
    ];
    for (const tg of targets) {
      for (const u of tg.urls) {
        const res = await fetch(u, { headers: tg.headers });
        if (res.status !== 200) throw new Error(`${tg.name}: HTTP ${res.status} ${await res.text()}`);
      }
    }
    for (const tg of targets) await cannon(tg.name, tg.urls, tg.headers, WARMUP_S);
    const figures: Figures[] = targets.map((tg) => ({ name: tg.name, reqPerSec: 0, p99Ms: 0, non2xx: 0 }));
    for (let round = 0; round < ROUNDS; round++) {
      for (const [i, tg] of targets.entries()) {
        const f = await cannon(tg.name, tg.urls, tg.headers, DURATION_S);
        const best = figures[i]!;
        best.non2xx += f.non2xx;
        if (f.reqPerSec > best.reqPerSec) Object.assign(best, { reqPerSec: f.reqPerSec, p99Ms: f.p99Ms });
      }
    }
    const base = figures[0]!.reqPerSec;
    console.log(`autocannon, ${CONNECTIONS} connections, best of ${ROUNDS} interleaved rounds of ${DURATION_S} s after ${WARMUP_S} s warm-up, 127.0.0.1; PostgreSQL + Redis`);
    console.log('route                                  req/s     p99 ms   ratio to bare   non-2xx');
    for (const f of figures) {
      console.log(`${f.name.padEnd(38)} ${f.reqPerSec.toFixed(0).padStart(7)}  ${f.p99Ms.toFixed(1).padStart(8)}   ${(f.reqPerSec / base).toFixed(2).padStart(12)}   ${String(f.non2xx).padStart(7)}`);
    }
    const redis = figures[1]!.reqPerSec / base;
    const two = figures[2]!.reqPerSec / figures[1]!.reqPerSec;
    console.log(`goals: Redis-backed position >= 0.50 of bare: ${redis >= 0.5 ? 'met' : 'NOT met'} (${redis.toFixed(2)}); two processes / one: ${two.toFixed(2)} (on this machine's cores, shared with the load generator)`);
    if (figures.some((f) => f.non2xx > 0)) throw new Error('some benchmark answers were not 2xx');
  } finally {
    bare?.stop();
    await Promise.all(servers.map((s) => s.stop()));
    await stores.drop();
  }
}
