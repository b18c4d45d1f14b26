import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import pino from 'pino';
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../config.ts';
import type { AppContext } from '../context.ts';
import { installTestClock, now, readClockFile } from './clock.ts';

function contextWith(env: Record<string, string>): AppContext {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'nadirline-clock-'));
  return { config: loadConfig({ SQLITE_FILE: path.join(dir, 'x.sqlite'), ...env }), sequelize: null as never, logger: pino({ level: 'silent' }), onClose: () => undefined, services: {} };
}

describe('the test clock file', () => {
  it('reads milliseconds or an ISO date, and nothing from a missing or unreadable file', () => {
    const file = path.join(fs.mkdtempSync(path.join(os.tmpdir(), 'nadirline-clock-')), 'clock');
    expect(readClockFile(file)).toBeNull();
    fs.writeFileSync(file, '1905000000000\n');
    expect(readClockFile(file)).toBe(1_905_000_000_000);
    fs.writeFileSync(file, '2030-05-20T00:05:00Z');
    expect(readClockFile(file)).toBe(Date.UTC(2030, 4, 20, 0, 5));
    fs.writeFileSync(file, 'soon');
    expect(readClockFile(file)).toBeNull();
  });

  it('moves now() for every reader of the file, and is absent without TEST_CLOCK_FILE', () => {
    const file = path.join(fs.mkdtempSync(path.join(os.tmpdir(), 'nadirline-clock-')), 'clock');
    const a = contextWith({ TEST_CLOCK_FILE: file });
    const b = contextWith({ TEST_CLOCK_FILE: file });
    installTestClock(a);
    installTestClock(b);
    fs.writeFileSync(file, String(Date.UTC(2030, 4, 20)));
    expect(now(a).toISOString()).toBe('2030-05-20T00:00:00.000Z');
    expect(now(b).toISOString()).toBe('2030-05-20T00:00:00.000Z');
    fs.writeFileSync(file, String(Date.UTC(2030, 4, 21)));
    expect(now(b).toISOString()).toBe('2030-05-21T00:00:00.000Z');
    const plain = contextWith({});
    installTestClock(plain);
    expect(plain.services.clock).toBeUndefined();
    expect(Math.abs(now(plain).getTime() - Date.now())).toBeLessThan(1_000);
  });
});
