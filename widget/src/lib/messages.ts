/**
 * Problems in plain words. One table from problem code to what the reader sees and what the
 * widget does next; nothing here is console-only.
 */
import type { ApiProblem } from './api.ts';
import { ageWords } from './format.ts';
import { english, type Translate } from './words.ts';

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
  /** What the notice was made from, so a view can say it again in the reader's language. */
  source?: { problem: Pick<ApiProblem, 'code' | 'status' | 'retryAfterS'>; ctx: NoticeContext };
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
  /** The problem concerns the saved embed itself (its id), not a satellite. */
  embed?: boolean | undefined;
}

/** Exponential backoff: 2 s, 4 s, 8 s ... up to 2 minutes. */
export function backoffMs(attempt: number): number {
  return Math.min(120_000, 2000 * 2 ** Math.max(0, attempt - 1));
}

function secondsWords(ms: number, t: Translate): string {
  const s = Math.round(ms / 1000);
  if (s < 60) return t('seconds', { n: s });
  return t('minutes', { n: Math.round(s / 60) });
}

/**
 * What the widget does about a problem, decided by the HTTP status first (one table, no
 * precedence traps): 401 and 403 stop the map for good, 429 waits, other 4xx answers stop the
 * one satellite they concern (or the map when they concern the embed), and 5xx, network and
 * unreadable answers are retried with backoff.
 */
export type ProblemAction = 'stop-map' | 'stop-satellite' | 'wait' | 'retry';

export function actionFor(p: Pick<ApiProblem, 'code' | 'status'>): ProblemAction {
  if (p.code === 'quota-exceeded' || p.code === 'rate-limited' || p.status === 429) return 'wait';
  if (WIDGET_FATAL.has(p.code) || p.status === 401 || p.status === 403) return 'stop-map';
  if (p.status >= 400 && p.status < 500) return 'stop-satellite';
  return 'retry';
}

/**
 * Codes the widget makes up itself, for conditions no API answer names (the README lists them
 * next to the API's problem codes). Everything else in `code` is the API's own problem code.
 */
export const WIDGET_CODES = ['no-key', 'no-satellites', 'stale-element-set', 'network', 'server', 'bad-answer', 'widget'] as const;
const WIDGET_FATAL = new Set<string>(['no-key', 'no-satellites']);

/**
 * The notice for a problem, in the words of `t` (English by default). The decision (fatal,
 * retry) never depends on the language; a view may call this again with the reader's translator
 * from `notice.source`.
 */
export function noticeFor(p: Pick<ApiProblem, 'code' | 'status' | 'retryAfterS'>, ctx: NoticeContext = {}, t: Translate = english): Notice {
  const source = { problem: p, ctx };
  const sat = ctx.satellite ? t('quoted', { name: ctx.satellite }) : t('thisSatellite');
  const Sat = ctx.satellite ? t('quoted', { name: ctx.satellite }) : t('ThisSatellite');
  const help = t('keyHelp');
  const attempt = ctx.attempt ?? 1;
  const stop = (heading: string, text: string, severity: Severity = 'error'): Notice => ({ code: p.code, severity, heading, text, fatal: true, source });
  const satNotice = (heading: string, text: string, severity: Severity = 'error'): Notice => ({ code: p.code, severity, heading, text, fatal: false, source });
  const age = ctx.ageDays === undefined ? '' : ageWords(ctx.ageDays, t);
  switch (p.code) {
    case 'no-key':
    case 'unauthenticated':
      return stop(t('noKeyHead'), t('noKeyText'));
    case 'invalid-key':
      return stop(t('invalidKeyHead'), t('invalidKeyText', { help }));
    case 'key-expired':
      return stop(t('expiredHead'), t('expiredText', { help }));
    case 'key-revoked':
      return stop(t('revokedHead'), t('revokedText', { help }));
    case 'key-rotated':
      return stop(t('rotatedHead'), t('rotatedText', { help }));
    case 'origin-not-allowed':
      return stop(t('originHead'), t('originText', { origin: ctx.origin ?? t('thisSite') }));
    case 'quota-exceeded': {
      const retryMs = (p.retryAfterS ?? 15 * 60) * 1000;
      return { ...stop(t('quotaHead'), t('quotaText', { wait: secondsWords(retryMs, t) })), retryMs };
    }
    case 'rate-limited': {
      const retryMs = Math.max(1000, (p.retryAfterS ?? 0) * 1000 || backoffMs(attempt));
      return { ...satNotice(t('busyHead'), t('busyText', { wait: secondsWords(retryMs, t) }), 'warning'), retryMs };
    }
    case 'not-found':
      if (ctx.embed) return stop(t('mapNotFoundHead'), t('mapNotFoundText'));
      return satNotice(t('notFoundHead'), t('notFoundText', { sat }));
    case 'stale-element-set':
      return satNotice(t('staleHead'), ctx.ageDays === undefined ? t('staleTextNoAge', { sat }) : t('staleText', { sat, age }), 'warning');
    case 'no-element-set':
      return satNotice(t('noSetHead'), t('noSetText', { Sat }), 'warning');
    case 'decayed':
      return satNotice(t('decayedHead'), ctx.ageDays === undefined ? t('decayedText', { Sat }) : t('decayedTextAge', { Sat, age }));
    case 'propagation-failed':
      return satNotice(t('propagationHead'), t('propagationText', { sat }));
    case 'no-satellites':
      return stop(t('noSatellitesHead'), t('noSatellitesText'), 'info');
    case 'network':
    case 'server':
    case 'internal':
    case 'unavailable':
    case 'bad-answer': {
      const retryMs = backoffMs(attempt);
      const net = p.code === 'network';
      const parts = [net ? t('networkText') : t('serverText'), ctx.dataTime ? t('keptData', { time: ctx.dataTime }) : '', t('tryingAgain', { wait: secondsWords(retryMs, t) })];
      return { ...satNotice(net ? t('networkHead') : t('serverHead'), parts.filter(Boolean).join(' '), 'warning'), retryMs };
    }
    default: {
      const what = `${p.code}${p.status ? `, ${p.status}` : ''}`;
      switch (actionFor(p)) {
        case 'stop-map':
          return p.status === 403 ? stop(t('refusedHead'), t('refusedText', { what })) : stop(t('invalidKeyHead'), t('refusedKeyText', { what, help }));
        case 'stop-satellite':
          return satNotice(t('satNotShownHead'), t('satNotShownText', { sat, what }));
        default: {
          const retryMs = backoffMs(attempt);
          return { ...satNotice(t('unexpectedHead'), t('unexpectedText', { what, wait: secondsWords(retryMs, t) })), retryMs };
        }
      }
    }
  }
}

/** A notice said again in the reader's language (the same decision, other words). */
export function sayNotice<N extends Notice>(n: N, t: Translate): N {
  if (!n.source || t === english) return n;
  const again = noticeFor(n.source.problem, n.source.ctx, t);
  return { ...n, heading: again.heading, text: again.text };
}
