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

const KEY_HELP = 'The site owner can set a current browser key in the api-key attribute, from the Nadirline console.';

export function noticeFor(p: Pick<ApiProblem, 'code' | 'status' | 'retryAfterS'>, ctx: NoticeContext = {}): Notice {
  const sat = ctx.satellite ? `“${ctx.satellite}”` : 'this satellite';
  const Sat = ctx.satellite ? `“${ctx.satellite}”` : 'This satellite';
  const attempt = ctx.attempt ?? 1;
  const stop = (heading: string, text: string, severity: Severity = 'error'): Notice => ({ code: p.code, severity, heading, text, fatal: true });
  const satNotice = (heading: string, text: string, severity: Severity = 'error'): Notice => ({ code: p.code, severity, heading, text, fatal: false });
  switch (p.code) {
    case 'no-key':
    case 'unauthenticated':
      return stop(
        'This map has no key',
        'Without one Nadirline cannot show it. The page owner can set the api-key attribute of <nadir-track> to a browser key from the Nadirline console, or set the embed attribute to a saved embed’s id.',
      );
    case 'invalid-key':
      return stop('Map key not accepted', `Nadirline did not accept the key this map uses. ${KEY_HELP}`);
    case 'key-expired':
      return stop('Map key expired', `The key this map uses has expired. ${KEY_HELP}`);
    case 'key-revoked':
      return stop('Map key withdrawn', `The key this map uses has been revoked. ${KEY_HELP}`);
    case 'key-rotated':
      return stop('Map key replaced', `The key this map uses was replaced by a new one. ${KEY_HELP}`);
    case 'origin-not-allowed':
      return stop(
        'Not allowed on this site',
        `This map’s key is not allowed on ${ctx.origin ?? 'this site'}. The site owner can add this address to the key’s allowed origins in the Nadirline console.`,
      );
    case 'quota-exceeded': {
      const retryMs = (p.retryAfterS ?? 15 * 60) * 1000;
      return {
        ...stop('Allowance used up', `This site has used its Nadirline allowance for now. The map will try again in ${secondsWords(retryMs)}.`),
        retryMs,
      };
    }
    case 'rate-limited': {
      const retryMs = Math.max(1000, (p.retryAfterS ?? 0) * 1000 || backoffMs(attempt));
      return { ...satNotice('Busy for a moment', `Too many requests just now. Trying again in ${secondsWords(retryMs)}.`, 'warning'), retryMs };
    }
    case 'not-found':
      return satNotice('Satellite not found', `Nadirline does not know ${sat}, or this key may not show it. The site owner can check the satellites attribute.`);
    case 'stale-element-set':
      return satNotice(
        'Old orbit data',
        `The orbit data for ${sat} is ${ctx.ageDays === undefined ? 'out of date' : `${ageWords(ctx.ageDays)} old`}, so its position may be off by many kilometres.`,
        'warning',
      );
    case 'no-element-set':
      return satNotice(
        'No orbit data yet',
        `${Sat} has no element set yet, so it cannot be drawn. The satellite’s team can upload one in the Nadirline console.`,
        'warning',
      );
    case 'decayed':
      return satNotice(
        'No longer in orbit',
        `${Sat} appears to have re-entered or its orbit can no longer be computed${ctx.ageDays === undefined ? '' : ` (orbit data ${ageWords(ctx.ageDays)} old)`}.`,
      );
    case 'propagation-failed':
      return satNotice('Position not available', `Nadirline could not work out where ${sat} is from its element set. The satellite’s team can check its latest upload.`);
    case 'no-satellites':
      return stop(
        'Nothing to show yet',
        'No satellites are set for this map. The site owner can list satellite ids in the satellites attribute or choose an embed.',
        'info',
      );
    case 'network':
    case 'server':
    case 'internal':
    case 'unavailable':
    case 'bad-answer': {
      const retryMs = backoffMs(attempt);
      const kept = ctx.dataTime ? ` Showing what was known at ${ctx.dataTime}, marked as out of date.` : '';
      return {
        ...satNotice(
          p.code === 'network' ? 'No connection' : 'Nadirline did not answer properly',
          `${p.code === 'network' ? 'Cannot reach Nadirline.' : 'The Nadirline service had a problem.'}${kept} Trying again in ${secondsWords(retryMs)}.`,
          'warning',
        ),
        retryMs,
      };
    }
    default: {
      const what = `${p.code}${p.status ? `, ${p.status}` : ''}`;
      switch (actionFor(p)) {
        case 'stop-map':
          return p.status === 403
            ? stop('Not allowed', `Nadirline refused this map’s requests (${what}). The site owner can check the key in the Nadirline console.`)
            : stop('Map key not accepted', `Nadirline refused this map’s requests (${what}). ${KEY_HELP}`);
        case 'stop-satellite':
          return satNotice('Satellite not shown', `Nadirline could not give the orbit of ${sat} (${what}).`);
        default: {
          const retryMs = backoffMs(attempt);
          return {
            ...satNotice('Something went wrong', `Nadirline answered with an unexpected problem (${what}). Trying again in ${secondsWords(retryMs)}.`),
            retryMs,
          };
        }
      }
    }
  }
}

/**
 * Words of the time control, the sky plot and the calendar link (kept here with the other
 * widget words so they can be translated in one place).
 */
export const TIME_WORDS = {
  controlLabel: 'Time shown on the map',
  now: 'Now',
  backToNow: 'Back to now',
  backToPinned: 'Back to the pinned time',
  orbitBack: '− 1 orbit',
  orbitAhead: '+ 1 orbit',
  orbitBackLabel: 'One orbit back',
  orbitAheadLabel: 'One orbit ahead',
  /** "Shown: 14:05, 2 h 10 min ahead" */
  shown: (time: string, offset: string) => `Shown: ${time}, ${offset}`,
  /** "Map shows 14:05 (2 h 10 min ahead of now)" for screen readers. */
  announce: (time: string, offset: string) => `Map shows ${time} (${offset}).`,
  panelAt: (time: string) => `Position at ${time}`,
} as const;

export const SKY_WORDS = {
  open: 'Sky path',
  openLabel: (when: string) => `Show the path across your sky of the pass at ${when}`,
  close: 'Close',
  title: (name: string, when: string) => `${name} across your sky, ${when}`,
  north: 'N',
  east: 'E',
  south: 'S',
  west: 'W',
  rise: 'rise',
  set: 'set',
  legendVisible: 'sunlit in a dark sky: visible to the eye',
  legendSunlit: 'sunlit, but your sky is still light',
  legendShadow: 'in the Earth’s shadow',
  loading: 'Working out the path…',
  failed: 'The path could not be loaded.',
  /** Text equivalent, one sentence per stretch. */
  riseText: (time: string, dir: string) => `Rises at ${time} in the ${dir}.`,
  highestText: (time: string, elev: number, dir: string) => `Highest at ${time}, ${elev}° above the horizon in the ${dir}.`,
  setText: (time: string, dir: string) => `Sets at ${time} in the ${dir}.`,
  runText: (kind: 'visible' | 'sunlit' | 'shadow', from: string, to: string) =>
    kind === 'visible'
      ? `From ${from} to ${to} it is sunlit while your sky is dark: look for it.`
      : kind === 'sunlit'
        ? `From ${from} to ${to} it is sunlit, but your sky is too light to see it.`
        : `From ${from} to ${to} it is in the Earth’s shadow.`,
  orientation: 'North is at the top, east to the right; the centre is straight overhead, the circle the horizon.',
} as const;

export const CALENDAR_WORDS = {
  add: 'Add to calendar',
  addLabel: (name: string) => `Add the passes of ${name} over you to your calendar (iCalendar file)`,
} as const;
