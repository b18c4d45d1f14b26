/**
 * SQLite allows one writer at a time. Left to itself, every transaction opens its own connection
 * and waits for the file lock inside SQLite's busy handler, which holds a libuv worker thread per
 * waiting writer: twenty waiting uploads starve the four threads every reader needs too. So on
 * SQLite the process queues its transactions here, in order, and only one at a time talks to the
 * file; readers keep their threads and, in WAL mode, never wait for the writer.
 *
 * A transaction that cannot start within WRITE_LOCK_WAIT_MS fails with DatabaseBusyError, which
 * the error handler answers as 503 `busy` with Retry-After (never 500). PostgreSQL does not use
 * this queue: its own row and index locks order concurrent writers, and a lock not had within
 * DATABASE_LOCK_TIMEOUT_MS (lock_timeout on every connection) is answered the same way.
 */

/** How long a transaction may wait for its turn before the request answers 503 busy. */
export const WRITE_LOCK_WAIT_MS = 10_000;
/** Retry-After, in seconds, of a 503 busy answer. */
export const BUSY_RETRY_AFTER_S = 2;

export class DatabaseBusyError extends Error {
  constructor(message = 'The database is busy with other writes.') {
    super(message);
    this.name = 'DatabaseBusyError';
  }
}

/** A first-come, first-served lock with a bounded wait. */
export class WriteLock {
  private held = false;
  private readonly waiting: Array<{ grant: () => void }> = [];

  /** How long acquire() waits, ms (WRITE_LOCK_WAIT_MS; tests shorten it). */
  constructor(public waitMs = WRITE_LOCK_WAIT_MS) {}

  /** Resolves with a release function once the lock is ours; rejects with DatabaseBusyError after waitMs. */
  acquire(): Promise<() => void> {
    let released = false;
    const release = () => {
      if (released) return;
      released = true;
      const next = this.waiting.shift();
      if (next) next.grant();
      else this.held = false;
    };
    if (!this.held) {
      this.held = true;
      return Promise.resolve(release);
    }
    return new Promise((resolve, reject) => {
      const entry = {
        grant: () => {
          clearTimeout(timer);
          resolve(release);
        },
      };
      const timer = setTimeout(() => {
        const i = this.waiting.indexOf(entry);
        if (i !== -1) this.waiting.splice(i, 1);
        reject(new DatabaseBusyError(`Waited ${Math.round(this.waitMs / 1000)} s for other writes to finish.`));
      }, this.waitMs);
      this.waiting.push(entry);
    });
  }

  /** Writers waiting for their turn (for tests and diagnostics). */
  get queued(): number {
    return this.waiting.length;
  }
}

/** True for errors that mean "the database was locked too long", on either dialect. */
export function isDatabaseBusy(err: unknown): boolean {
  if (err instanceof DatabaseBusyError) return true;
  const e = err as { name?: string; parent?: { code?: string }; original?: { code?: string } } | null;
  const code = e?.parent?.code ?? e?.original?.code;
  // SQLite: SQLITE_BUSY / SQLITE_LOCKED. PostgreSQL: lock_not_available (55P03, lock_timeout),
  // query_canceled (57014, statement_timeout), deadlock (40P01), serialization failure (40001).
  return (
    e?.name === 'SequelizeTimeoutError' ||
    code === 'SQLITE_BUSY' ||
    code === 'SQLITE_LOCKED' ||
    code === '55P03' ||
    code === '57014' ||
    code === '40P01' ||
    code === '40001'
  );
}
