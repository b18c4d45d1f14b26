import { describe, expect, it } from 'vitest';
import { safeNext } from './index.ts';

describe('the return path after sign-in', () => {
  it('follows paths inside the console', () => {
    expect(safeNext('/o/org1/keys?x=1')).toBe('/o/org1/keys?x=1');
  });
  it('ignores other sites, protocol-relative and backslash tricks', () => {
    expect(safeNext('https://elsewhere.example/')).toBeNull();
    expect(safeNext('//elsewhere.example/')).toBeNull();
    expect(safeNext('/\\elsewhere.example')).toBeNull();
    expect(safeNext(['/a'])).toBeNull();
  });
});
