/**
 * Server figures, side by side in one run, with autocannon on 127.0.0.1:
 *   1. a bare Express 5 route (its own process, JSON answer, nothing else),
 *   2. keyed GET /v1/satellites/{id}/position (the real server, demo data, server key),
 *   3. keyed GET /v1/satellites/{id}/track for one orbit at a 60 s step (one window, as many
 *      readers of one page ask it: after the first answer it comes from the answer cache),
 *   4. the same with a window one second later on every request (every answer computed).
 * Goals: position at 0.7 of the bare route or better, track at 0.5 or better; p99 reported.
 * The demo server key's rate limit is raised in the SQLite file before the measured start, so
 * the limiter runs on every request but never cuts the run short.
 */
import { spawn } from 'node:child_process';
import path from 'node:path';
import autocannon from 'autocannon';
import { QueryTypes, Sequelize } from 'sequelize';
import { repoRoot, startServer } from '../support/server.ts';

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

interface Target {
  name: string;
  url: string;
  headers: Record<string, string>;
  /** Path of each request, when it must change (defeats the server's answer cache). */
  nextPath?: () => string;
}

async function cannon(tg: Target, seconds: number): Promise<Figures> {
  const { name, url, headers } = tg;
  const result = await autocannon({
    url,
    headers,
    connections: CONNECTIONS,
    duration: seconds,
    pipelining: 1,
    ...(tg.nextPath ? { requests: [{ setupRequest: (req: autocannon.Request) => ({ ...req, path: tg.nextPath!() }) }] } : {}),
  });
  return { name, reqPerSec: result.requests.average, p99Ms: result.latency.p99, non2xx: result.non2xx + result.errors + result.timeouts };
}

/** A bare Express route in its own process; resolves with its port and a stop function. */
export async function startBare(): Promise<{ port: number; stop: () => void }> {
  const code = `
    import express from 'express';
    const app = express();
    app.disable('x-powered-by');
    app.get('/bare', (_req, res) => { res.json({ t: new Date().toISOString(), lat: 12.34567, lon: -45.6789, altKm: 520.123, sunlit: true }); });
    const server = app.listen(0, '127.0.0.1', () => { console.log('port ' + server.address().port); });
    process.on('SIGTERM', () => server.close(() => process.exit(0)));
  `;
  const child = spawn(process.execPath, ['--input-type=module', '-e', code], { cwd: path.join(repoRoot, 'server'), stdio: ['ignore', 'pipe', 'inherit'] });
  const port = await new Promise<number>((resolve, reject) => {
    let out = '';
    child.stdout?.setEncoding('utf8');
    child.stdout?.on('data', (d: string) => {
      out += d;
      const m = /port (\d+)/.exec(out);
      if (m) resolve(Number(m[1]));
    });
    child.once('exit', (c) => reject(new Error(`bare server exited with ${c}`)));
  });
  return { port, stop: () => child.pid && process.kill(child.pid, 'SIGTERM') };
}

export async function run(): Promise<void> {
  // Seed once, raise the demo server key's rate limit, then start the server to measure.
  const seeding = await startServer({ env: { LOG_LEVEL: 'warn' } });
  const { serverKey, satellites } = seeding.credentials;
  const dataDir = seeding.dataDir;
  await seeding.stop();
  const db = new Sequelize({ dialect: 'sqlite', storage: path.join(dataDir, 'nadirline.sqlite'), logging: false });
  await db.query("UPDATE api_keys SET rateLimitPerMin = 100000000 WHERE kind = 'server'", { type: QueryTypes.UPDATE });
  await db.query("UPDATE organizations SET plan = 'constellation'", { type: QueryTypes.UPDATE });
  await db.close();

  const server = await startServer({ dataDir, env: { LOG_LEVEL: 'warn', NODE_ENV: 'production', SESSION_SECRET: 'bench-session-secret-0123456789', DEMO: 'true' } });
  const bare = await startBare();
  try {
    const id = satellites.find((s) => s.name.startsWith('Orrery'))?.id ?? satellites[0]!.id;
    const auth = { Authorization: `Bearer ${serverKey}` };
    const start = new Date(Math.floor(Date.now() / 60_000) * 60_000);
    const end = new Date(start.getTime() + 93 * 60_000);
    let shift = 0;
    const targets: Target[] = [
      { name: 'bare Express route', url: `http://127.0.0.1:${bare.port}/bare`, headers: {} },
      { name: 'keyed /position', url: `${server.url}/v1/satellites/${id}/position`, headers: auth },
      { name: 'keyed /track (1 orbit, 60 s)', url: `${server.url}/v1/satellites/${id}/track?start=${start.toISOString()}&end=${end.toISOString()}&step=60`, headers: auth },
      {
        name: 'keyed /track, new window each',
        url: `${server.url}/v1/satellites/${id}/track`,
        headers: auth,
        // A window one second later each time: every answer is computed, none comes from the cache.
        nextPath: () => {
          shift = (shift + 1) % 86_400;
          const s = new Date(start.getTime() + shift * 1000);
          const e = new Date(s.getTime() + 93 * 60_000);
          return `/v1/satellites/${id}/track?start=${s.toISOString()}&end=${e.toISOString()}&step=60`;
        },
      },
    ];
    // Check each answer once, then warm up, then measure.
    for (const tg of targets) {
      const res = await fetch(tg.url, { headers: tg.headers });
      if (res.status !== 200) throw new Error(`${tg.name}: HTTP ${res.status} ${await res.text()}`);
    }
    for (const tg of targets) await cannon(tg, WARMUP_S);
    // Rounds interleave the targets so a busy moment of the machine hurts all of them alike; the
    // best round of each target is reported.
    const figures: Figures[] = targets.map((tg) => ({ name: tg.name, reqPerSec: 0, p99Ms: 0, non2xx: 0 }));
    for (let round = 0; round < ROUNDS; round++) {
      for (const [i, tg] of targets.entries()) {
        const f = await cannon(tg, DURATION_S);
        const best = figures[i]!;
        best.non2xx += f.non2xx;
        if (f.reqPerSec > best.reqPerSec) Object.assign(best, { reqPerSec: f.reqPerSec, p99Ms: f.p99Ms });
      }
    }

    const base = figures[0]!.reqPerSec;
    console.log(`autocannon, ${CONNECTIONS} connections, best of ${ROUNDS} interleaved rounds of ${DURATION_S} s after ${WARMUP_S} s warm-up, 127.0.0.1`);
    console.log('route                          req/s     p99 ms   ratio to bare   non-2xx');
    for (const f of figures) {
      console.log(`${f.name.padEnd(30)} ${f.reqPerSec.toFixed(0).padStart(7)}  ${f.p99Ms.toFixed(1).padStart(8)}   ${(f.reqPerSec / base).toFixed(2).padStart(12)}   ${String(f.non2xx).padStart(7)}`);
    }
    const pos = figures[1]!.reqPerSec / base;
    const track = figures[2]!.reqPerSec / base;
    const fresh = figures[3]!.reqPerSec / base;
    console.log(`goals: position >= 0.70 of bare: ${pos >= 0.7 ? 'met' : 'NOT met'} (${pos.toFixed(2)}); track >= 0.50: ${track >= 0.5 ? 'met' : 'NOT met'} (${track.toFixed(2)}; every answer computed: ${fresh.toFixed(2)})`);
    if (figures.some((f) => f.non2xx > 0)) throw new Error('some benchmark answers were not 2xx');
  } finally {
    bare.stop();
    await server.stop();
  }
}
