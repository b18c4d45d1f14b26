/**
 * The console's one way to the server: typed calls to `/api` (docs/console-api.md).
 *
 * - Sends the session cookie (same origin) and, on every non-GET call, the `X-CSRF-Token` header.
 * - Turns every failure into an `ApiError`: problem+json answers keep their `code`, `detail` and
 *   field-level `errors`; a dead network becomes code `network` with status 0.
 * - A `csrf-failed` answer fetches a fresh token from `/api/session` and retries the call once.
 * - It does not decide what a 401 means for the page: `useAsync` (composables/useAsync.ts) does.
 */
import type {
  ActivityEvent,
  ApiKey,
  Billing,
  Derived,
  ElementSetSummary,
  Embed,
  EmbedInput,
  ExportFormat,
  FieldProblem,
  Invitation,
  InvitationPreview,
  KeplerInput,
  KeyCreateInput,
  KeyUpdateInput,
  Member,
  Membership,
  NoticeKind,
  NoticePreference,
  Organization,
  OrgNotice,
  PreviewToken,
  ProblemBody,
  Role,
  Satellite,
  SatelliteListItem,
  SessionInfo,
  Subscription,
  UploadReport,
  UsageReport,
  WebhookDelivery,
  WebhookEndpoint,
  WebhookEndpointInput,
  WebhookEndpointList,
  WebhookEndpointUpdate,
  WebhookEndpointWithSecret,
  User,
  KeyRotateInput,
} from './types.ts';

export class ApiError extends Error {
  readonly status: number;
  /** Stable machine code from the problem body (`forbidden`, `validation-failed`, ...), or `http-<status>` / `network`. */
  readonly code: string;
  readonly title: string;
  readonly detail: string;
  readonly errors: FieldProblem[];
  /** Seconds from `Retry-After`, when the server sent it. */
  readonly retryAfterS: number | undefined;
  /** The whole problem body, for extension members (e.g. an upload `report`). */
  readonly body: Record<string, unknown>;

  constructor(init: {
    status: number;
    code: string;
    title: string;
    detail?: string;
    errors?: FieldProblem[];
    retryAfterS?: number | undefined;
    body?: Record<string, unknown>;
  }) {
    super(init.detail || init.title);
    this.name = 'ApiError';
    this.status = init.status;
    this.code = init.code;
    this.title = init.title;
    this.detail = init.detail ?? '';
    this.errors = init.errors ?? [];
    this.retryAfterS = init.retryAfterS;
    this.body = init.body ?? {};
  }

  /** Field name -> first message, for forms that show errors beside their inputs. */
  fieldErrors(): Record<string, string> {
    const out: Record<string, string> = {};
    for (const e of this.errors) {
      const name = fieldName(e);
      if (name && !(name in out)) out[name] = e.message;
    }
    return out;
  }

  /** Errors that name no field: shown above the form. */
  generalErrors(): string[] {
    return this.errors.filter((e) => !fieldName(e)).map((e) => e.message);
  }
}

/**
 * Which input a field problem belongs to. Forms name inputs after the leaf of the path:
 * field "kepler.eccentricity" or where "/kepler/eccentricity" -> "eccentricity";
 * "origins.2" or "/origins/2" -> "origins". Places in a text ("line 3, column 12") name no field.
 */
export function fieldName(e: FieldProblem): string | undefined {
  const leaf = (parts: string[]) => parts.filter((p) => p !== '' && !/^\d+$/.test(p)).at(-1);
  if (e.field) return leaf(e.field.split('.')) ?? e.field;
  const w = e.where?.trim() ?? '';
  if (w.startsWith('/')) return leaf(w.slice(1).split('/'));
  if (/^[A-Za-z]\w*$/.test(w)) return w;
  return undefined;
}

function parseRetryAfter(v: string | null): number | undefined {
  if (!v) return undefined;
  const s = Number(v);
  if (Number.isFinite(s)) return Math.max(0, s);
  const at = Date.parse(v);
  return Number.isNaN(at) ? undefined : Math.max(0, Math.round((at - Date.now()) / 1000));
}

const STATUS_TITLES: Record<number, string> = {
  400: 'The request was not accepted',
  401: 'Please sign in',
  403: 'Not allowed',
  404: 'Not found',
  409: 'Conflict',
  413: 'Too large',
  422: 'Could not be processed',
  429: 'Too many requests',
  500: 'The server had a problem',
  502: 'The server is not reachable',
  503: 'The service is unavailable',
};

/** Read a non-2xx answer into an ApiError (problem+json or anything else). */
export async function errorFromResponse(res: Response): Promise<ApiError> {
  let body: ProblemBody = {};
  const type = res.headers.get('content-type') ?? '';
  if (type.includes('json')) {
    try {
      const parsed: unknown = await res.json();
      if (parsed && typeof parsed === 'object') body = parsed as ProblemBody;
    } catch {
      // unreadable body: the status alone speaks
    }
  }
  const errors = Array.isArray(body.errors)
    ? (body.errors as unknown[])
        .filter((e): e is FieldProblem => !!e && typeof e === 'object' && typeof (e as FieldProblem).message === 'string')
        .map((e) => ({ ...e, where: typeof e.where === 'string' ? e.where : '' }))
    : [];
  return new ApiError({
    status: res.status,
    code: typeof body.code === 'string' ? body.code : `http-${res.status}`,
    title: typeof body.title === 'string' ? body.title : (STATUS_TITLES[res.status] ?? `Error ${res.status}`),
    detail: typeof body.detail === 'string' ? body.detail : '',
    errors,
    retryAfterS: parseRetryAfter(res.headers.get('retry-after')),
    body: body as Record<string, unknown>,
  });
}

type Query = Record<string, string | number | boolean | undefined | null>;

export interface RequestOptions {
  query?: Query;
  /** JSON body, or FormData sent as multipart. */
  body?: unknown;
  /** Read the answer as text instead of JSON. */
  text?: boolean;
}

const SAFE = new Set(['GET', 'HEAD']);

export function withQuery(path: string, query?: Query): string {
  if (!query) return path;
  const q = new URLSearchParams();
  for (const [k, v] of Object.entries(query)) if (v !== undefined && v !== null && v !== '') q.set(k, String(v));
  const s = q.toString();
  return s ? `${path}?${s}` : path;
}

const seg = encodeURIComponent;

export class ApiClient {
  /** CSRF token of the current session (from GET /api/session or sign-in). */
  csrfToken = '';

  constructor(
    private readonly base = '/api',
    private readonly fetchImpl: typeof fetch = (input, init) => globalThis.fetch(input, init),
  ) {}

  async request<T>(method: string, path: string, opts: RequestOptions = {}, retried = false): Promise<T> {
    const headers: Record<string, string> = { accept: opts.text ? 'text/plain, */*' : 'application/json, application/problem+json' };
    let body: BodyInit | undefined;
    if (opts.body instanceof FormData) body = opts.body;
    else if (opts.body !== undefined) {
      headers['content-type'] = 'application/json';
      body = JSON.stringify(opts.body);
    }
    if (!SAFE.has(method) && this.csrfToken) headers['x-csrf-token'] = this.csrfToken;

    let res: Response;
    try {
      res = await this.fetchImpl(withQuery(this.base + path, opts.query), { method, headers, body, credentials: 'same-origin' });
    } catch (e) {
      throw new ApiError({
        status: 0,
        code: 'network',
        title: 'No connection to the server',
        detail: e instanceof Error && e.message ? `The request did not reach the server (${e.message}). Check your connection and try again.` : 'The request did not reach the server.',
      });
    }
    if (!res.ok) {
      const err = await errorFromResponse(res);
      if (err.code === 'csrf-failed' && !retried && path !== '/session') {
        await this.session();
        return this.request<T>(method, path, opts, true);
      }
      throw err;
    }
    if (res.status === 204 || res.status === 202 || res.headers.get('content-length') === '0') return undefined as T;
    if (opts.text) return (await res.text()) as T;
    const type = res.headers.get('content-type') ?? '';
    if (!type.includes('json')) return undefined as T;
    return (await res.json()) as T;
  }

  get<T>(path: string, query?: Query) {
    return this.request<T>('GET', path, { query });
  }
  post<T>(path: string, body?: unknown) {
    return this.request<T>('POST', path, { body: body ?? {} });
  }
  patch<T>(path: string, body: unknown) {
    return this.request<T>('PATCH', path, { body });
  }
  delete(path: string) {
    return this.request<void>('DELETE', path);
  }

  // ---- session and account ----
  async session(): Promise<SessionInfo> {
    const s = await this.get<SessionInfo>('/session');
    this.csrfToken = s.csrfToken ?? '';
    return { user: s.user ?? null, memberships: s.memberships ?? [], csrfToken: s.csrfToken ?? '' };
  }
  /** Signing up from an invitation signs in at once: the answer then carries the session (`signedIn`, memberships, CSRF token). */
  async signUp(input: { email: string; name: string; password: string; organizationName?: string; invitationToken?: string }) {
    const s = await this.post<{ user: User; signedIn?: boolean; memberships?: Membership[]; csrfToken?: string }>('/auth/signup', input);
    if (s.csrfToken) this.csrfToken = s.csrfToken;
    return s;
  }
  verifyEmail(token: string) {
    return this.post<{ user: User }>('/auth/verify-email', { token });
  }
  resendVerification(email: string) {
    return this.post<void>('/auth/resend-verification', { email });
  }
  async signIn(email: string, password: string): Promise<SessionInfo> {
    const s = await this.post<SessionInfo>('/auth/signin', { email, password });
    if (s.csrfToken) this.csrfToken = s.csrfToken;
    return { user: s.user, memberships: s.memberships ?? [], csrfToken: s.csrfToken ?? this.csrfToken };
  }
  signOut() {
    return this.post<void>('/auth/signout');
  }
  forgotPassword(email: string) {
    return this.post<void>('/auth/forgot-password', { email });
  }
  resetPassword(token: string, password: string) {
    return this.post<void>('/auth/reset-password', { token, password });
  }
  updateMe(input: { name?: string; password?: string; currentPassword?: string }) {
    return this.patch<{ user: User }>('/me', input);
  }

  // ---- organizations and members ----
  createOrg(name: string) {
    return this.post<{ organization: Organization }>('/orgs', { name });
  }
  org(org: string) {
    return this.get<{ organization: Organization; role: Role }>(`/orgs/${seg(org)}`);
  }
  renameOrg(org: string, name: string) {
    return this.patch<{ organization: Organization }>(`/orgs/${seg(org)}`, { name });
  }
  deleteOrg(org: string) {
    return this.delete(`/orgs/${seg(org)}`);
  }
  transferOrg(org: string, userId: string) {
    return this.post<void>(`/orgs/${seg(org)}/transfer`, { userId });
  }
  members(org: string) {
    return this.get<{ members: Member[]; invitations: Invitation[] }>(`/orgs/${seg(org)}/members`);
  }
  invite(org: string, email: string, role: Role) {
    return this.post<{ invitation: Invitation }>(`/orgs/${seg(org)}/invitations`, { email, role });
  }
  cancelInvitation(org: string, id: string) {
    return this.delete(`/orgs/${seg(org)}/invitations/${seg(id)}`);
  }
  invitation(token: string) {
    return this.get<InvitationPreview>(`/invitations/${seg(token)}`);
  }
  acceptInvitation(token: string) {
    return this.post<{ membership: Membership }>(`/invitations/${seg(token)}/accept`);
  }
  changeRole(org: string, userId: string, role: Role) {
    return this.patch<{ member: Member }>(`/orgs/${seg(org)}/members/${seg(userId)}`, { role });
  }
  removeMember(org: string, userId: string) {
    return this.delete(`/orgs/${seg(org)}/members/${seg(userId)}`);
  }

  // ---- satellites and element sets ----
  satellites(org: string) {
    return this.get<{ satellites: SatelliteListItem[] }>(`/orgs/${seg(org)}/satellites`);
  }
  createSatellite(org: string, input: { name: string; description?: string; elements?: string }) {
    return this.post<{ satellite: Satellite; report?: UploadReport['report'] }>(`/orgs/${seg(org)}/satellites`, input);
  }
  satellite(org: string, id: string) {
    return this.get<{ satellite: Satellite; current: ElementSetSummary | null; derived: Derived | null }>(`/orgs/${seg(org)}/satellites/${seg(id)}`);
  }
  updateSatellite(org: string, id: string, input: { name?: string; description?: string }) {
    return this.patch<{ satellite: Satellite }>(`/orgs/${seg(org)}/satellites/${seg(id)}`, input);
  }
  deleteSatellite(org: string, id: string) {
    return this.delete(`/orgs/${seg(org)}/satellites/${seg(id)}`);
  }
  elementSets(org: string, id: string) {
    return this.get<{ elementSets: ElementSetSummary[] }>(`/orgs/${seg(org)}/satellites/${seg(id)}/element-sets`);
  }
  /** Text, hand-typed Keplerian elements, or files (multipart `files[]`). 422 when none was accepted. */
  addElementSets(org: string, id: string, input: { text: string } | { kepler: KeplerInput } | { files: File[] }) {
    const path = `/orgs/${seg(org)}/satellites/${seg(id)}/element-sets`;
    if ('files' in input) {
      const form = new FormData();
      for (const f of input.files) form.append('files[]', f, f.name);
      return this.request<UploadReport>('POST', path, { body: form });
    }
    return this.post<UploadReport>(path, input);
  }
  confirmElementSet(org: string, elementSetId: string) {
    return this.post<{ elementSet: ElementSetSummary }>(`/orgs/${seg(org)}/element-sets/${seg(elementSetId)}/confirm`);
  }
  updateOrgSettings(org: string, settings: { confirmSuspiciousSets: boolean }) {
    return this.patch<{ organization: Organization }>(`/orgs/${seg(org)}/settings`, settings);
  }
  exportUrl(org: string, elementSetId: string, format: ExportFormat): string {
    return withQuery(`${this.base}/orgs/${seg(org)}/element-sets/${seg(elementSetId)}/export`, { format });
  }
  exportText(org: string, elementSetId: string, format: ExportFormat) {
    return this.request<string>('GET', `/orgs/${seg(org)}/element-sets/${seg(elementSetId)}/export`, { query: { format }, text: true });
  }

  // ---- keys ----
  keys(org: string) {
    return this.get<{ keys: ApiKey[] }>(`/orgs/${seg(org)}/keys`);
  }
  createKey(org: string, input: KeyCreateInput) {
    return this.post<{ key: ApiKey; secret: string }>(`/orgs/${seg(org)}/keys`, input);
  }
  updateKey(org: string, id: string, input: KeyUpdateInput) {
    return this.patch<{ key: ApiKey }>(`/orgs/${seg(org)}/keys/${seg(id)}`, input);
  }
  rotateKey(org: string, id: string, input: KeyRotateInput) {
    return this.post<{ key: ApiKey; secret: string; previous: ApiKey; embedsMoved: number }>(`/orgs/${seg(org)}/keys/${seg(id)}/rotate`, input);
  }
  revokeKey(org: string, id: string) {
    return this.post<{ key: ApiKey }>(`/orgs/${seg(org)}/keys/${seg(id)}/revoke`);
  }
  /** 204; 409 `key-in-use` (a KeyInUseProblem naming the embeds) while embeds read with the key. */
  deleteKey(org: string, id: string) {
    return this.delete(`/orgs/${seg(org)}/keys/${seg(id)}`);
  }

  // ---- embeds ----
  embeds(org: string) {
    return this.get<{ embeds: Embed[] }>(`/orgs/${seg(org)}/embeds`);
  }
  createEmbed(org: string, input: EmbedInput) {
    return this.post<{ embed: Embed }>(`/orgs/${seg(org)}/embeds`, input);
  }
  updateEmbed(org: string, id: string, input: Partial<EmbedInput>) {
    return this.patch<{ embed: Embed }>(`/orgs/${seg(org)}/embeds/${seg(id)}`, input);
  }
  deleteEmbed(org: string, id: string) {
    return this.delete(`/orgs/${seg(org)}/embeds/${seg(id)}`);
  }

  // ---- usage, activity, plan ----
  usage(org: string, from: string, to: string) {
    return this.get<UsageReport>(`/orgs/${seg(org)}/usage`, { from, to });
  }
  usageCsvUrl(org: string, from: string, to: string): string {
    return withQuery(`${this.base}/orgs/${seg(org)}/usage.csv`, { from, to });
  }
  activity(org: string, before?: number, limit = 50) {
    return this.get<{ events: ActivityEvent[] }>(`/orgs/${seg(org)}/activity`, { before, limit });
  }
  /** A short-lived read-only /v1 credential for the live previews (any member). */
  previewToken(org: string) {
    return this.post<PreviewToken>(`/orgs/${seg(org)}/preview-token`);
  }
  billing(org: string) {
    return this.get<Billing>(`/orgs/${seg(org)}/billing`);
  }
  checkout(org: string, plan: string) {
    return this.post<{ url: string }>(`/orgs/${seg(org)}/billing/checkout`, { plan });
  }
  /** The payment provider's billing page (card, invoices, cancel). */
  billingPortal(org: string) {
    return this.post<{ url: string }>(`/orgs/${seg(org)}/billing/portal`);
  }
  cancelSubscription(org: string) {
    return this.post<{ subscription: Subscription }>(`/orgs/${seg(org)}/billing/cancel`);
  }
  resumeSubscription(org: string) {
    return this.post<{ subscription: Subscription }>(`/orgs/${seg(org)}/billing/resume`);
  }
  notices(org: string) {
    return this.get<{ notices: OrgNotice[] }>(`/orgs/${seg(org)}/notices`);
  }
  noticePreferences() {
    return this.get<{ preferences: NoticePreference[] }>('/me/notices');
  }
  setNoticePreferences(changes: Partial<Record<NoticeKind, boolean>>) {
    return this.patch<{ preferences: NoticePreference[] }>('/me/notices', changes);
  }

  // ---- webhooks out (owners and admins) ----
  webhooks(org: string) {
    return this.get<WebhookEndpointList>(`/orgs/${seg(org)}/webhooks`);
  }
  createWebhook(org: string, input: WebhookEndpointInput) {
    return this.post<WebhookEndpointWithSecret>(`/orgs/${seg(org)}/webhooks`, input);
  }
  updateWebhook(org: string, id: string, input: WebhookEndpointUpdate) {
    return this.patch<{ endpoint: WebhookEndpoint }>(`/orgs/${seg(org)}/webhooks/${seg(id)}`, input);
  }
  deleteWebhook(org: string, id: string) {
    return this.delete(`/orgs/${seg(org)}/webhooks/${seg(id)}`);
  }
  rotateWebhookSecret(org: string, id: string) {
    return this.post<WebhookEndpointWithSecret>(`/orgs/${seg(org)}/webhooks/${seg(id)}/rotate-secret`);
  }
  sendTestWebhook(org: string, id: string) {
    return this.post<{ delivery: WebhookDelivery }>(`/orgs/${seg(org)}/webhooks/${seg(id)}/test`);
  }
  webhookDeliveries(org: string, limit = 50) {
    return this.get<{ deliveries: WebhookDelivery[] }>(`/orgs/${seg(org)}/webhook-deliveries`, { limit });
  }
  webhookDelivery(org: string, id: string) {
    return this.get<{ delivery: WebhookDelivery }>(`/orgs/${seg(org)}/webhook-deliveries/${seg(id)}`);
  }
  redeliverWebhook(org: string, id: string) {
    return this.post<{ delivery: WebhookDelivery }>(`/orgs/${seg(org)}/webhook-deliveries/${seg(id)}/redeliver`);
  }
}

/** The app's client. Tests replace `fetch` on globalThis. */
export const api = new ApiClient();
