/**
 * TRUST_PROXY decides whose address X-Forwarded-For names: the sign-in guard counts failed tries
 * per client address and e-mail, so it shows which address the server believed.
 */
import { describe, expect, it } from 'vitest';
import { startTestApp } from './console-api.harness.ts';

async function failedTries(env: Record<string, string>): Promise<number[]> {
  const t = await startTestApp(env);
  try {
    const b = t.browser();
    const statuses: number[] = [];
    const tryFrom = async (address: string) => {
      await b.session();
      const res = await b.agent.post('/api/auth/signin').set('X-CSRF-Token', b.csrf).set('X-Forwarded-For', address).send({ email: 'nobody@example.test', password: 'wrong password' });
      statuses.push(res.status);
    };
    for (let i = 0; i < 5; i++) await tryFrom('203.0.113.7');
    await tryFrom('198.51.100.9');
    return statuses;
  } finally {
    await t.close();
  }
}

describe('TRUST_PROXY', () => {
  it('believes X-Forwarded-For from the loopback proxy by default: another forwarded address has its own budget', async () => {
    expect(await failedTries({})).toEqual([401, 401, 401, 401, 401, 401]);
  });

  it('ignores X-Forwarded-For with TRUST_PROXY=false: every try comes from the same peer', async () => {
    expect(await failedTries({ TRUST_PROXY: 'false' })).toEqual([401, 401, 401, 401, 401, 429]);
  });

  it('refuses a TRUST_PROXY that is no address, subnet or name, before opening anything', async () => {
    await expect(startTestApp({ TRUST_PROXY: 'behind-the-shed' })).rejects.toThrow(/TRUST_PROXY/);
  });
});
