/** Finished /v1 answers: kept by ETag and written straight to the socket. */
import type { Response } from 'express';
import { LRUCache } from 'lru-cache';

/** JSON straight to the socket: the hot routes set their own caching headers, so express's ETag hashing is skipped. */
export function sendJson(res: Response, body: unknown, type = 'application/json; charset=utf-8'): void {
  const data = typeof body === 'string' || Buffer.isBuffer(body) ? body : JSON.stringify(body);
  res.setHeader('Content-Type', type);
  res.setHeader('Content-Length', typeof data === 'string' ? Buffer.byteLength(data) : data.length);
  res.end(data);
}

/** A finished answer: its bytes (UTF-8) and Content-Type. */
export interface CachedAnswer {
  body: Buffer;
  type: string;
}

/** Where finished answers are kept by ETag. One process keeps them in memory; a shared store can take its place. */
export interface AnswerCache {
  get(etag: string): CachedAnswer | undefined;
  set(etag: string, body: string, type: string): void;
}

/** Default bound of the track answer cache: bytes of the answers it holds. */
export const TRACK_CACHE_MAX_BYTES = 64 * 1024 * 1024;
/** Answers larger than this are not kept (a week at a 10 s step is about 5 MB; a day at 60 s, 100 KB). */
export const TRACK_CACHE_MAX_ANSWER_BYTES = 1_000_000;
/** What an entry costs beyond its body: the ETag, the type and the cache's own bookkeeping (estimate). */
const ENTRY_OVERHEAD_BYTES = 200;

/**
 * Finished track answers by ETag, bounded by the bytes they hold (least recently asked go first):
 * the same window asked again costs no propagation. Bodies are kept as Buffers: flat bytes outside
 * the JS heap, counted exactly, and written to the socket as they are (a body built by string
 * concatenation is a rope that can cost several times its length while it is a string).
 */
export class TrackAnswerCache implements AnswerCache {
  private readonly entries: LRUCache<string, CachedAnswer>;
  private readonly maxAnswerBytes: number;

  constructor(opts: { maxBytes?: number; maxAnswerBytes?: number } = {}) {
    const maxBytes = opts.maxBytes ?? TRACK_CACHE_MAX_BYTES;
    this.maxAnswerBytes = Math.min(opts.maxAnswerBytes ?? TRACK_CACHE_MAX_ANSWER_BYTES, maxBytes);
    this.entries = new LRUCache<string, CachedAnswer>({
      maxSize: maxBytes,
      sizeCalculation: (v, k) => v.body.length + k.length + v.type.length + ENTRY_OVERHEAD_BYTES,
    });
  }

  get(etag: string): CachedAnswer | undefined {
    return this.entries.get(etag);
  }

  set(etag: string, body: string, type: string): void {
    const bytes = Buffer.from(body, 'utf8');
    if (bytes.length > this.maxAnswerBytes) return;
    this.entries.set(etag, { body: bytes, type });
  }

  /** Bytes held (bodies, keys and the overhead estimate) and answers held. */
  get size(): { bytes: number; answers: number } {
    return { bytes: this.entries.calculatedSize, answers: this.entries.size };
  }
}
