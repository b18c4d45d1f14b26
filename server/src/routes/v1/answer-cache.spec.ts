import { describe, expect, it } from 'vitest';
import { TRACK_CACHE_MAX_BYTES, TrackAnswerCache } from './answer-cache.ts';

const text = (a?: { body: Buffer }) => a?.body.toString('utf8');

describe('finished track answers by ETag', () => {
  it('returns what was stored, with its type', () => {
    const cache = new TrackAnswerCache();
    expect(cache.get('W/"a"')).toBeUndefined();
    cache.set('W/"a"', '{"points":[]}', 'application/json; charset=utf-8');
    const hit = cache.get('W/"a"');
    expect(text(hit)).toBe('{"points":[]}');
    expect(hit?.type).toBe('application/json; charset=utf-8');
  });

  it('drops the least recently asked answer when its bytes are spent', () => {
    // Room for two answers of 1,000 bytes with their overhead, not three.
    const cache = new TrackAnswerCache({ maxBytes: 2600 });
    const body = (c: string) => c.repeat(1000);
    cache.set('a', body('A'), 't');
    cache.set('b', body('B'), 't');
    expect(text(cache.get('a'))?.[0]).toBe('A'); // a is now the most recent
    cache.set('c', body('C'), 't');
    expect(cache.get('b')).toBeUndefined();
    expect(text(cache.get('a'))?.[0]).toBe('A');
    expect(text(cache.get('c'))?.[0]).toBe('C');
  });

  it('does not keep answers larger than its limit per answer', () => {
    const cache = new TrackAnswerCache({ maxAnswerBytes: 10 });
    cache.set('big', 'x'.repeat(11), 't');
    cache.set('small', 'x'.repeat(10), 't');
    expect(cache.get('big')).toBeUndefined();
    expect(cache.get('small')?.body).toHaveLength(10);
  });

  it('holds no more bytes than its bound, however many large answers arrive', () => {
    // 600 answers of 464 KB (a week of track at a 60 s step is about that): 278 MB if all were kept.
    const cache = new TrackAnswerCache();
    const big = `{"points":[${'{"t":"2026-01-01T00:00:00.000Z","lat":12.34567,"lon":-123.45678,"altKm":512.345,"sunlit":true},'.repeat(4880)}]}`;
    expect(big.length).toBeGreaterThan(460_000);
    let kept = 0;
    for (let i = 0; i < 600; i++) cache.set(`W/"${i}"`, `${big}${i}`, 'application/json');
    for (let i = 0; i < 600; i++) if (cache.get(`W/"${i}"`)) kept++;
    expect(kept * big.length).toBeLessThanOrEqual(64 * 1024 * 1024);
    expect(TRACK_CACHE_MAX_BYTES).toBe(64 * 1024 * 1024);
    expect(cache.size.bytes).toBeLessThanOrEqual(TRACK_CACHE_MAX_BYTES);
    // The newest answers are the ones kept.
    expect(text(cache.get('W/"599"'))?.endsWith('599')).toBe(true);
    expect(cache.get('W/"0"')).toBeUndefined();
  });
});
