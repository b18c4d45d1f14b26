/** Words and figures of the usage and plan pages: HTTP statuses, origins, page views. */

const STATUS_TEXT: Record<number, string> = {
  200: 'OK',
  201: 'Created',
  204: 'No content',
  304: 'Not modified (cached copy still good)',
  400: 'Bad request (a parameter was wrong)',
  401: 'Key not accepted',
  403: 'Refused (origin, scope or read-only key)',
  404: 'Not found',
  409: 'Conflict',
  413: 'Too large',
  415: 'Unsupported content type',
  422: 'Element set not usable',
  429: 'Rate-limited or quota reached',
  500: 'Server error',
  503: 'Unavailable',
};

/** "404 Not found"; "200 OK". */
export function statusLabel(status: number): string {
  return `${status} ${STATUS_TEXT[status] ?? (status >= 500 ? 'Server error' : status >= 400 ? 'Error' : status >= 300 ? 'Redirect' : 'Success')}`;
}

export function isErrorStatus(status: number): boolean {
  return status >= 400;
}

/**
 * Requests one page view of a typical embed sends, for turning a plan's requests into page views.
 * The assumption, stated on the plan page: one satellite in a low orbit, one orbit drawn behind and
 * one ahead, passes shown, the page read for a few minutes. The widget then asks for the embed (1),
 * the satellite (1), its elements (1), two track windows of two hours (2) and the passes (1).
 */
export const REQUESTS_PER_TYPICAL_VIEW = 6;

/** Page views of a typical embed that a number of requests pays for (rounded down). */
export function pageViews(requests: number, perView = REQUESTS_PER_TYPICAL_VIEW): number {
  return perView > 0 ? Math.floor(requests / perView) : 0;
}
