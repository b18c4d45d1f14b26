import crypto from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { addressProblem, endpointUrlProblem, openSecret, sealSecret, signPayload } from './webhooks.ts';

const production = { NODE_ENV: 'production' } as const;
const development = { NODE_ENV: 'development' } as const;
const test = { NODE_ENV: 'test' } as const;

describe('endpoint URLs', () => {
  it('in production, takes public https URLs only', () => {
    expect(endpointUrlProblem('https://hooks.example.org/nadirline', production)).toBeNull();
    expect(endpointUrlProblem('https://45.33.10.20:8443/in', production)).toBeNull();
    expect(endpointUrlProblem('https://[2001:db8::1]/in', production)).toMatch(/not a public address \(reserved\)/);
    expect(endpointUrlProblem('http://hooks.example.org/in', production)).toMatch(/Use an https:\/\/ URL/);
    expect(endpointUrlProblem('ftp://hooks.example.org/in', production)).toMatch(/https/);
  });

  it('in production, refuses loopback, private, link-local and local names, however written', () => {
    for (const url of [
      'http://127.0.0.1:8080/in',
      'https://127.0.0.1/in',
      'https://127.8.9.10/in',
      'https://localhost/in',
      'https://api.localhost/in',
      'https://[::1]/in',
      'https://[::ffff:127.0.0.1]/in',
      'https://[::ffff:10.0.0.1]/in',
      'https://10.0.0.8/in',
      'https://172.16.4.4/in',
      'https://192.168.1.20/in',
      'https://169.254.169.254/latest/meta-data',
      'https://100.64.0.1/in',
      'https://0.0.0.0/in',
      'https://[fe80::1]/in',
      'https://[fd12:3456::1]/in',
      'https://2130706433/in',
      'https://0x7f000001/in',
      'https://printer.local/in',
      'https://intranet/in',
    ]) {
      expect([url, endpointUrlProblem(url, production)]).toEqual([url, expect.any(String)]);
    }
  });

  it('in development and tests, takes a receiver on this machine, even over plain http', () => {
    for (const config of [development, test]) {
      expect(endpointUrlProblem('http://127.0.0.1:4000/in', config)).toBeNull();
      expect(endpointUrlProblem('http://localhost:4000/in', config)).toBeNull();
      expect(endpointUrlProblem('http://[::1]:4000/in', config)).toBeNull();
      // Still only this machine: other private addresses and plain http elsewhere are refused.
      expect(endpointUrlProblem('http://192.168.1.20/in', config)).toMatch(/https/);
      expect(endpointUrlProblem('https://10.0.0.8/in', config)).toMatch(/private/);
      expect(endpointUrlProblem('http://hooks.example.org/in', config)).toMatch(/https/);
    }
  });

  it('refuses credentials and fragments in the URL', () => {
    expect(endpointUrlProblem('https://me:pw@hooks.example.org/in', production)).toMatch(/user name and password/);
    expect(endpointUrlProblem('https://hooks.example.org/in#x', production)).toMatch(/fragment/);
  });

  it('judges resolved addresses the same way (checked again when connecting)', () => {
    expect(addressProblem('45.33.10.20', production)).toBeNull();
    expect(addressProblem('127.0.0.1', production)).toMatch(/loopback/);
    expect(addressProblem('127.0.0.1', test)).toBeNull();
    expect(addressProblem('::ffff:192.168.0.1', test)).toMatch(/private/);
  });
});

describe('signing secrets', () => {
  it('signs id.timestamp.body with HMAC-SHA256 in hex', () => {
    const body = '{"id":"evt_1","type":"plan.changed"}';
    const expected = crypto.createHmac('sha256', 'nlwh_s3cret').update(`evt_1.1767225600.${body}`).digest('hex');
    expect(signPayload('nlwh_s3cret', 'evt_1', 1767225600, body)).toBe(expected);
    expect(signPayload('nlwh_s3cret', 'evt_1', 1767225601, body)).not.toBe(expected);
  });

  it('keeps secrets sealed: opened with the same session secret only, and a changed byte is refused', () => {
    const config = { sessionSecret: 'a session secret of some length' };
    const sealed = sealSecret('nlwh_abc', config);
    expect(sealed).not.toContain('abc');
    expect(openSecret(sealed, config)).toBe('nlwh_abc');
    expect(sealSecret('nlwh_abc', config)).not.toBe(sealed);
    expect(() => openSecret(sealed, { sessionSecret: 'another session secret entirely' })).toThrow();
    const parts = sealed.split('.');
    const ct = Buffer.from(parts[3]!, 'base64url');
    ct[0] = ct[0]! ^ 1;
    expect(() => openSecret([...parts.slice(0, 3), ct.toString('base64url')].join('.'), config)).toThrow();
  });
});
