/**
 * The widget's size budget: each built script, the ES module and the classic one, is at most
 * 60 KB (61,440 bytes) gzipped at level 9, Vue and d3-geo included. A size of a built file is
 * the same on every run, so it is a test; `npm run bench` prints the same figures beside the
 * timings. The language files are fetched only by pages that ask for them and are not counted.
 */
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { gzipSync } from 'node:zlib';
import { beforeAll, describe, expect, it } from 'vitest';
import { repoRoot } from '../support/server.ts';

const DIST = path.join(repoRoot, 'widget', 'dist');
const BUDGET_BYTES = 60 * 1024;

beforeAll(() => {
  if (!fs.existsSync(path.join(DIST, 'nadir-track.js')) || !fs.existsSync(path.join(DIST, 'nadir-track.iife.js'))) {
    execFileSync(process.execPath, [path.join(repoRoot, 'node_modules', 'vite', 'bin', 'vite.js'), 'build'], { cwd: path.join(repoRoot, 'widget'), stdio: 'ignore' });
  }
});

const gzipBytes = (file: string) => gzipSync(fs.readFileSync(path.join(DIST, file)), { level: 9 }).length;

describe('the widget bundle budget', () => {
  for (const file of ['nadir-track.js', 'nadir-track.iife.js']) {
    it(`${file} is at most 60 KB gzipped`, () => {
      const bytes = gzipBytes(file);
      // a broken or empty build is no pass either
      expect(bytes).toBeGreaterThan(20 * 1024);
      expect(bytes, `${file}: ${bytes} bytes gzipped, budget ${BUDGET_BYTES}`).toBeLessThanOrEqual(BUDGET_BYTES);
    });
  }

  it('keeps the language files out of the scripts', () => {
    const script = fs.readFileSync(path.join(DIST, 'nadir-track.js'), 'utf8');
    // a German word and a German country name that only de.json holds
    expect(script).not.toContain('Überflüge');
    expect(script).not.toContain('den Vereinigten Staaten');
  });
});
