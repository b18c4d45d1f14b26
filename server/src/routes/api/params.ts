/** Route parameters as plain strings (Express 5 types them as string | string[]). */
import type { Request } from 'express';

export function param(req: Request, name: string): string {
  const value: unknown = req.params[name];
  return Array.isArray(value) ? String(value[0] ?? '') : typeof value === 'string' ? value : '';
}
