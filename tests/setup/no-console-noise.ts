import { afterEach, beforeEach, vi } from 'vitest';

// A test fails on an unexpected console.warn / console.error: noise hides real trouble.
let calls: string[] = [];
beforeEach(() => {
  calls = [];
  for (const level of ['warn', 'error'] as const) {
    vi.spyOn(console, level).mockImplementation((...args: unknown[]) => {
      calls.push(`console.${level}: ${args.map(String).join(' ')}`);
    });
  }
});
afterEach(() => {
  vi.restoreAllMocks();
  if (calls.length > 0) {
    const seen = calls;
    calls = [];
    throw new Error(`Unexpected console output:\n${seen.join('\n')}`);
  }
});
