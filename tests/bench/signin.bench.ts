/**
 * Does password hashing hold the event loop? The real server (demo data, development bcrypt cost
 * 10; production uses 12, four times the work per hash) answers GET /healthz, asked one after
 * another without pause, first alone, then while 20 sign-ins of the demo owner run at once
 * (each from its own client address, so no throttle interferes). Prints the /healthz latency
 * (p50, p99, max) of both phases and how long the 20 sign-ins took. A hash that runs on the main
 * thread shows as /healthz waiting behind it; one that runs in libuv's thread pool does not.
 */
import { startServer } from '../support/server.ts';

const SIGNINS = 20;
const IDLE_MS = 2_000;

const pct = (sorted: number[], p: number) => sorted[Math.min(sorted.length - 1, Math.floor((p / 100) * sorted.length))] ?? NaN;

async function probe(url: string, until: () => boolean): Promise<number[]> {
  const times: number[] = [];
  while (!until()) {
    const t = performance.now();
    const res = await fetch(`${url}/healthz`);
    await res.arrayBuffer();
    times.push(performance.now() - t);
  }
  return times.sort((a, b) => a - b);
}

const line = (name: string, t: number[]) => `${name.padEnd(34)} n=${String(t.length).padStart(5)}  p50 ${pct(t, 50).toFixed(1).padStart(7)} ms  p99 ${pct(t, 99).toFixed(1).padStart(7)} ms  max ${(t.at(-1) ?? NaN).toFixed(1).padStart(7)} ms`;

async function signIn(url: string, email: string, password: string, client: string): Promise<number> {
  const session = await fetch(`${url}/api/session`, { headers: { 'X-Forwarded-For': client } });
  const { csrfToken } = (await session.json()) as { csrfToken: string };
  const cookie = session.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ');
  const res = await fetch(`${url}/api/auth/signin`, {
    method: 'POST',
    headers: { 'Content-Type': 'application/json', 'X-CSRF-Token': csrfToken, Cookie: cookie, 'X-Forwarded-For': client },
    body: JSON.stringify({ email, password }),
  });
  await res.arrayBuffer();
  return res.status;
}

export async function run(): Promise<void> {
  const server = await startServer({ env: { LOG_LEVEL: 'warn' } });
  try {
    const owner = server.credentials.users.find((u) => u.role === 'owner')!;
    // Warm up: the decoy hash, the routes, the JIT.
    if ((await signIn(server.url, owner.email, owner.password, '198.18.0.1')) !== 200) throw new Error('warm-up sign-in refused');
    let idleDone = false;
    const idleTimer = setTimeout(() => (idleDone = true), IDLE_MS);
    const idle = await probe(server.url, () => idleDone);
    clearTimeout(idleTimer);

    let busyDone = false;
    const t0 = performance.now();
    const signins = Promise.all(Array.from({ length: SIGNINS }, (_, i) => signIn(server.url, owner.email, owner.password, `198.18.1.${i + 1}`))).then((statuses) => {
      busyDone = true;
      return statuses;
    });
    const busy = await probe(server.url, () => busyDone);
    const statuses = await signins;
    const totalMs = performance.now() - t0;
    if (statuses.some((s) => s !== 200)) throw new Error(`sign-ins answered ${statuses.join(',')}`);

    console.log(line('/healthz alone', idle));
    console.log(line(`/healthz during ${SIGNINS} sign-ins`, busy));
    console.log(`${SIGNINS} simultaneous sign-ins (bcrypt cost 10) took ${totalMs.toFixed(0)} ms in all; /healthz p99 rose ${(pct(busy, 99) / pct(idle, 99)).toFixed(1)}x`);
  } finally {
    await server.stop();
  }
}
