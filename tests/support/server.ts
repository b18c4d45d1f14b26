/**
 * Start the real Nadirline server as a child process for integration, browser and load tests.
 *
 *   const server = await startServer();            // demo data seeded, fresh SQLite file in a temp dir
 *   server.url           // "http://127.0.0.1:PORT" (no trailing slash)
 *   server.credentials   // data/demo-credentials.json of that run: users, browserKey, serverKey, satellites, embedId
 *   await server.stop(); // SIGTERM by pid, waits for exit (usage is flushed on the way out)
 *
 * The child runs `node --import tsx server/src/index.ts` with PORT=0 (the OS picks a free port),
 * HOST=127.0.0.1, SQLITE_FILE in a new temp dir, DEMO=true, NODE_ENV=development, LOG_LEVEL=warn,
 * unless `env` overrides them. Its output is kept in `output()` for failure messages.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { testStores, type TestStores } from './stores.ts';

export const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..');

export interface DemoCredentials {
  signInUrl: string;
  users: Array<{ role: 'owner' | 'admin' | 'editor' | 'viewer'; email: string; password: string }>;
  organizationId: string;
  browserKey: string;
  serverKey: string;
  satellites: Array<{ id: string; name: string }>;
  embedId: string;
}

export interface StartedServer {
  url: string;
  port: number;
  pid: number;
  dataDir: string;
  sqliteFile: string;
  /** The PostgreSQL database and Redis prefix of this server on the pg-redis run (env empty on SQLite). */
  stores: TestStores;
  /** Demo credentials (null, despite the type, when DEMO is off). */
  credentials: DemoCredentials;
  /** Everything the child printed so far (stdout and stderr). */
  output(): string;
  /** SIGTERM, then wait for the exit (SIGKILL after `timeoutMs`). Resolves with the exit code. */
  stop(timeoutMs?: number): Promise<number | null>;
}

export interface StartOptions {
  env?: Record<string, string | undefined>;
  /** Reuse a data directory (to test a second start on the same SQLite file). */
  dataDir?: string;
  /** How long to wait for the "running at" line, ms (default 60 s). */
  timeoutMs?: number;
  /**
   * Database and Redis prefix to use (a second server on the same data). Default: a new one on the
   * pg-redis run (tests/support/stores.ts), none on SQLite. stop() drops them unless keepStores.
   */
  stores?: TestStores;
  keepStores?: boolean;
}

export async function startServer(options: StartOptions = {}): Promise<StartedServer> {
  const dataDir = options.dataDir ?? fs.mkdtempSync(path.join(os.tmpdir(), 'nadirline-test-'));
  const sqliteFile = path.join(dataDir, 'nadirline.sqlite');
  const stores = options.stores ?? (await testStores());
  const env: Record<string, string> = {};
  for (const [k, v] of Object.entries(process.env)) if (v !== undefined && !k.startsWith('VITEST') && k !== 'NODE_OPTIONS') env[k] = v;
  Object.assign(env, {
    NODE_ENV: 'development',
    PORT: '0',
    HOST: '127.0.0.1',
    SQLITE_FILE: sqliteFile,
    DEMO: 'true',
    LOG_LEVEL: 'warn',
    ...stores.env,
  });
  for (const [k, v] of Object.entries(options.env ?? {})) {
    if (v === undefined) delete env[k];
    else env[k] = v;
  }
  const child: ChildProcess = spawn(process.execPath, ['--import', 'tsx', 'server/src/index.ts'], {
    cwd: repoRoot,
    env,
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let out = '';
  child.stdout?.setEncoding('utf8');
  child.stderr?.setEncoding('utf8');
  child.stdout?.on('data', (d: string) => (out += d));
  child.stderr?.on('data', (d: string) => (out += d));
  const exited = new Promise<number | null>((resolve) => child.once('exit', (code) => resolve(code)));

  const port = await new Promise<number>((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`server did not start within ${options.timeoutMs ?? 60_000} ms:\n${out}`)), options.timeoutMs ?? 60_000);
    const onData = () => {
      const m = /running at https?:\/\/[^:\s]+:(\d+)/.exec(out);
      if (m) {
        clearTimeout(timer);
        child.stdout?.off('data', onData);
        resolve(Number(m[1]));
      }
    };
    child.stdout?.on('data', onData);
    void exited.then((code) => {
      clearTimeout(timer);
      reject(new Error(`server exited with code ${code} before listening:\n${out}`));
    });
  });

  const credentialsFile = path.join(dataDir, 'demo-credentials.json');
  const demo = env.DEMO === 'true' || env.DEMO === '1' || env.DEMO === 'yes';
  if (demo && !fs.existsSync(credentialsFile)) {
    if (child.pid) process.kill(child.pid, 'SIGTERM');
    throw new Error(`the server listened but wrote no ${credentialsFile}:\n${out}`);
  }
  // Without DEMO there are no credentials: tests that start such a server create their own data.
  const credentials = demo ? (JSON.parse(fs.readFileSync(credentialsFile, 'utf8')) as DemoCredentials) : (null as unknown as DemoCredentials);

  let stopping: Promise<number | null> | undefined;
  return {
    url: `http://127.0.0.1:${port}`,
    port,
    pid: child.pid ?? -1,
    dataDir,
    sqliteFile,
    stores,
    credentials,
    output: () => out,
    stop(timeoutMs = 15_000) {
      stopping ??= (async () => {
        if (child.exitCode !== null || child.signalCode !== null) {
          if (!options.keepStores) await stores.drop();
          return child.exitCode;
        }
        if (child.pid) process.kill(child.pid, 'SIGTERM');
        const timer = setTimeout(() => {
          if (child.pid && child.exitCode === null) process.kill(child.pid, 'SIGKILL');
        }, timeoutMs);
        const code = await exited;
        clearTimeout(timer);
        if (!options.keepStores) await stores.drop();
        return code;
      })();
      return stopping;
    },
  };
}
