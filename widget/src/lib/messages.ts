/**
 * Problems in plain words. One table from problem code to what the reader sees and what the
 * widget does next; nothing here is console-only.
 */
import type { ApiProblem } from './api.ts';
import { ageWords } from './format.ts';

export type Severity = 'error' | 'warning' | 'info';

export interface Notice {
  code: string;
  severity: Severity;
  /** Short heading. */
  heading: string;
  /** One or two sentences for the reader (and the site owner, when it is theirs to fix). */
  text: string;
  /** Whether the whole widget stops (bad key, origin) or only one satellite is affected. */
  fatal: boolean;
  /** Milliseconds before the widget asks again; undefined means it does not retry by itself. */
  retryMs?: number;
}

export interface NoticeContext {
  /** Satellite name (or id) the problem concerns, when it concerns one. */
  satellite?: string | undefined;
  /** Origin of the host page, for the origin message. */
  origin?: string | undefined;
  /** Element-set age in days, for stale / decayed. */
  ageDays?: number | undefined;
  /** Attempt number for backoff (1 = first retry). */
  attempt?: number | undefined;
  /** Time of the newest data still shown, already formatted for the reader. */
  dataTime?: string | undefined;
}

/** Exponential backoff: 2 s, 4 s, 8 s ... up to 2 minutes. */
export function backoffMs(attempt: number): number {
  return Math.min(120_000, 2000 * 2 ** Math.max(0, attempt - 1));
}

function secondsWords(ms: number): string {
  const s = Math.round(ms / 1000);
  if (s < 60) return `${s} second${s === 1 ? '' : 's'}`;
  const m = Math.round(s / 60);
  return `${m} minute${m === 1 ? '' : 's'}`;
}

export function noticeFor(p: Pick<ApiProblem, 'code' | 'status' | 'retryAfterS'>, ctx: NoticeContext = {}): Notice {
  const sat = ctx.satellite ? `“${ctx.satellite}”` : 'this satellite';
  const attempt = ctx.attempt ?? 1;
  switch (p.code) {
    case 'invalid-key':
      return {
        code: p.code,
        severity: 'error',
        heading: 'Map key not accepted',
        text: 'Nadirline did not accept the key this map uses. The site owner can check the api-key attribute or create a new browser key in the Nadirline console.',
        fatal: true,
      };
    case 'origin-not-allowed':
      return {
        code: p.code,
        severity: 'error',
        heading: 'Not allowed on this site',
        text: `This map’s key is not allowed on ${ctx.origin ?? 'this site'}. The site owner can add this address to the key’s allowed origins in the Nadirline console.`,
        fatal: true,
      };
    case 'quota-exceeded': {
      const retryMs = (p.retryAfterS ?? 15 * 60) * 1000;
      return {
        code: p.code,
        severity: 'error',
        heading: 'Allowance used up',
        text: `This site has used its Nadirline allowance for now. The map will try again in ${secondsWords(retryMs)}.`,
        fatal: true,
        retryMs,
      };
    }
    case 'rate-limited': {
      const retryMs = Math.max(1000, (p.retryAfterS ?? 0) * 1000 || backoffMs(attempt));
      return {
        code: p.code,
        severity: 'warning',
        heading: 'Busy for a moment',
        text: `Too many requests just now. Trying again in ${secondsWords(retryMs)}.`,
        fatal: false,
        retryMs,
      };
    }
    case 'not-found':
      return {
        code: p.code,
        severity: 'error',
        heading: 'Satellite not found',
        text: `Nadirline does not know ${sat}, or this key may not show it. The site owner can check the satellites attribute.`,
        fatal: false,
      };
    case 'stale-element-set':
      return {
        code: p.code,
        severity: 'warning',
        heading: 'Old orbit data',
        text: `The orbit data for ${sat} is ${ctx.ageDays === undefined ? 'out of date' : `${ageWords(ctx.ageDays)} old`}, so its position may be off by many kilometres.`,
        fatal: false,
      };
    case 'no-elements':
      return {
        code: p.code,
        severity: 'warning',
        heading: 'No orbit data yet',
        text: `${ctx.satellite ? `“${ctx.satellite}”` : 'This satellite'} has no element set yet, so it cannot be drawn. The satellite’s team can upload one in the Nadirline console.`,
        fatal: false,
      };
    case 'decayed':
      return {
        code: p.code,
        severity: 'error',
        heading: 'No longer in orbit',
        text: `${ctx.satellite ? `“${ctx.satellite}”` : 'This satellite'} appears to have re-entered or its orbit can no longer be computed${ctx.ageDays === undefined ? '' : ` (orbit data ${ageWords(ctx.ageDays)} old)`}.`,
        fatal: false,
      };
    case 'network':
    case 'server':
    case 'bad-answer': {
      const retryMs = backoffMs(attempt);
      const kept = ctx.dataTime ? ` Showing what was known at ${ctx.dataTime}, marked as out of date.` : '';
      return {
        code: p.code,
        severity: 'warning',
        heading: p.code === 'network' ? 'No connection' : 'Nadirline did not answer properly',
        text: `${p.code === 'network' ? 'Cannot reach Nadirline.' : 'The Nadirline service had a problem.'}${kept} Trying again in ${secondsWords(retryMs)}.`,
        fatal: false,
        retryMs,
      };
    }
    case 'no-satellites':
      return {
        code: p.code,
        severity: 'info',
        heading: 'Nothing to show yet',
        text: 'No satellites are set for this map. The site owner can list satellite ids in the satellites attribute or choose an embed.',
        fatal: true,
      };
    default: {
      const retryMs = backoffMs(attempt);
      return {
        code: p.code,
        severity: 'error',
        heading: 'Something went wrong',
        text: `Nadirline answered with an unexpected problem (${p.code}${p.status ? `, ${p.status}` : ''}). Trying again in ${secondsWords(retryMs)}.`,
        fatal: false,
        retryMs,
      };
    }
  }
}
