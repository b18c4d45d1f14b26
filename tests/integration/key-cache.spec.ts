/**
 * Guessed keys cannot push working keys out of the key cache: unknown key hashes are kept in
 * their own small cache (UNKNOWN_KEY_CACHE_MAX), working keys in a least-recently-used cache.
 * The same holds for embed ids (and satellite ids in the orbit cache, built the same way).
 */
import request from 'supertest';
import { afterAll, beforeAll, expect, it } from 'vitest';
import { getEmbedService } from '@nadirline/server/services/embeds.ts';
import { getKeyService, UNKNOWN_KEY_CACHE_MAX } from '@nadirline/server/services/keys.ts';
import { startKeyedApp, type KeyedTestApp } from '../support/app.ts';

let t: KeyedTestApp;
beforeAll(async () => {
  t = await startKeyedApp();
});
afterAll(async () => {
  await t?.close();
});

it('keeps a working key cached while 10,050 guessed keys are looked up', async () => {
  const keys = getKeyService(t.context);
  await keys.authenticate(t.serverKey);
  expect(keys.authenticateCached(t.serverKey)?.id).toBe(t.serverKeyId);
  for (let i = 0; i < 10_050; i++) {
    await expect(keys.authenticate(`nls_guess${String(i).padStart(28, '0')}`)).rejects.toMatchObject({ code: 'invalid-key' });
  }
  // Still answered from memory, without a database read.
  expect(keys.authenticateCached(t.serverKey)?.id).toBe(t.serverKeyId);
  expect(keys.cacheSizes().unknown).toBeLessThanOrEqual(UNKNOWN_KEY_CACHE_MAX);
  expect(keys.cacheSizes().known).toBeLessThanOrEqual(10);
  // A guessed key seen a moment ago answers from the unknown-key cache, as 401.
  expect(() => keys.authenticateCached(`nls_guess${String(10_049).padStart(28, '0')}`)).toThrow(/No key ending in/);
  const res = await request(t.app).get('/v1/satellites').set('Authorization', `Bearer ${t.serverKey}`);
  expect(res.status).toBe(200);
}, 60_000);

it('keeps a real embed cached while 10,050 guessed embed ids are looked up', async () => {
  const embeds = getEmbedService(t.context);
  await embeds.resolveForRead(t.embedId);
  expect(embeds.resolveForReadCached(t.embedId)?.embed.id).toBe(t.embedId);
  for (let i = 0; i < 10_050; i++) expect(await embeds.findEmbed(`guess${i}`)).toBeNull();
  expect(embeds.resolveForReadCached(t.embedId)?.embed.id).toBe(t.embedId);
}, 60_000);
