/** Finished /v1 answers: kept by ETag and written straight to the socket. */
import type { Response } from 'express';

/** JSON straight to the socket: the hot routes set their own caching headers, so express's ETag hashing is skipped. */
export function sendJson(res: Response, body: unknown, type = 'application/json; charset=utf-8'): void {
  const text = typeof body === 'string' ? body : JSON.stringify(body);
  res.setHeader('Content-Type', type);
  res.setHeader('Content-Length', Buffer.byteLength(text));
  res.end(text);
}

/** Finished track answers by ETag (bounded): the same window asked again costs no propagation. */
export class TrackAnswerCache {
  private readonly entries = new Map<string, { body: string; type: string }>();
  constructor(private readonly maxEntries = 512, private readonly maxBodyChars = 1_000_000) {}
  get(etag: string) {
    const hit = this.entries.get(etag);
    if (hit) {
      this.entries.delete(etag);
      this.entries.set(etag, hit);
    }
    return hit;
  }
  set(etag: string, body: string, type: string): void {
    if (body.length > this.maxBodyChars) return;
    this.entries.set(etag, { body, type });
    if (this.entries.size > this.maxEntries) {
      const oldest = this.entries.keys().next().value;
      if (oldest !== undefined) this.entries.delete(oldest);
    }
  }
}
