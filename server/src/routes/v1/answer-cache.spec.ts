import { describe, expect, it } from 'vitest';
import { TrackAnswerCache } from './answer-cache.ts';

describe('finished track answers by ETag', () => {
  it('returns what was stored, with its type', () => {
    const cache = new TrackAnswerCache();
    expect(cache.get('W/"a"')).toBeUndefined();
    cache.set('W/"a"', '{"points":[]}', 'application/json; charset=utf-8');
    expect(cache.get('W/"a"')).toEqual({ body: '{"points":[]}', type: 'application/json; charset=utf-8' });
  });

  it('drops the least recently asked answer when full', () => {
    const cache = new TrackAnswerCache(2);
    cache.set('a', 'A', 't');
    cache.set('b', 'B', 't');
    expect(cache.get('a')?.body).toBe('A'); // a is now the most recent
    cache.set('c', 'C', 't');
    expect(cache.get('b')).toBeUndefined();
    expect(cache.get('a')?.body).toBe('A');
    expect(cache.get('c')?.body).toBe('C');
  });

  it('does not keep answers larger than its limit', () => {
    const cache = new TrackAnswerCache(8, 10);
    cache.set('big', 'x'.repeat(11), 't');
    cache.set('small', 'x'.repeat(10), 't');
    expect(cache.get('big')).toBeUndefined();
    expect(cache.get('small')?.body).toHaveLength(10);
  });
});
