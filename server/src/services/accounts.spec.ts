import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../config.ts';
import type { AppContext } from '../context.ts';
import { hashPassword, passwordMatches } from './accounts.ts';

// Made with bcryptjs 3.0.3 (the hashing library before the native one), cost 4.
const BCRYPTJS_HASH = '$2b$04$kIrMJYcESPQIBu2gZmhZ5eyUzprGIMyyMfVVwuMgn/aBmafLUBGyW';

describe('password hashes', () => {
  it('verify hashes stored before the move to the native bcrypt, in both prefixes, and refuse a wrong password', async () => {
    expect(await passwordMatches('correct horse battery', BCRYPTJS_HASH)).toBe(true);
    expect(await passwordMatches('correct horse battery', BCRYPTJS_HASH.replace('$2b$', '$2a$'))).toBe(true);
    expect(await passwordMatches('correct horse batterY', BCRYPTJS_HASH)).toBe(false);
  });

  it('make new $2b$ hashes at the cost of the environment that verify, while the event loop keeps turning', async () => {
    const ctx = { config: loadConfig({ NODE_ENV: 'development', SQLITE_FILE: path.join(fs.mkdtempSync(path.join(os.tmpdir(), 'nadirline-hash-')), 'x.sqlite') }) } as unknown as AppContext;
    let turns = 0;
    const timer = setInterval(() => turns++, 1);
    const hash = await hashPassword(ctx, 'correct horse battery');
    clearInterval(timer);
    expect(hash).toMatch(/^\$2b\$10\$/);
    expect(await passwordMatches('correct horse battery', hash)).toBe(true);
    // A cost-10 hash takes tens of milliseconds; off the main thread, 1 ms timers fire meanwhile.
    expect(turns).toBeGreaterThan(3);
  });
});
