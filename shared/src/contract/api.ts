/**
 * Shapes of the console API (`/api`), as written in docs/console-api.md: the server's services
 * write these (their serializers are typed with them) and the console reads them, so a change of
 * a shape fails type checks in both. Where the answer carries an object of the orbit engine
 * unchanged (derived elements, staleness, a set's source, Keplerian input), the type is the
 * engine's own. Types only: nothing here is bundled.
 */
import type { KeplerianInput } from '../elements/kepler.ts';
import type { ElementSetSource } from '../types.ts';
import type { Continuity, V1ElementSetSummary, V1ReportEntry, V1Satellite } from './v1.ts';

export type { Continuity };
import type { DerivedElements, Staleness } from '../orbit/elements-derived.ts';

export type { ElementSetSource, Staleness };

export type Role = 'owner' | 'admin' | 'editor' | 'viewer';
export type PlanId = 'starter' | 'mission' | 'constellation' | (string & {});

export interface User {
  id: string;
  email: string;
  name: string;
  emailVerified: boolean;
  createdAt: string;
}

export interface OrganizationRef {
  id: string;
  name: string;
  plan: PlanId;
}

export interface Organization extends OrganizationRef {
  createdAt: string;
  /** Hold element sets that do not continue the orbit until an editor confirms them. */
  confirmSuspiciousSets: boolean;
}

export interface Membership {
  organization: OrganizationRef;
  role: Role;
}

export interface SessionInfo {
  user: User | null;
  memberships: Membership[];
  csrfToken: string;
}

export interface Member {
  userId: string;
  name: string;
  email: string;
  role: Role;
  joinedAt: string;
}

export interface Invitation {
  id: string;
  email: string;
  role: Role;
  expiresAt: string;
  invitedBy: string | { name: string; email?: string } | null;
}

export interface InvitationPreview {
  organization: { name: string };
  email: string;
  role: Role;
  expiresAt: string;
}


/** An element set as the console lists it: the /v1 summary, read leniently. */
export interface ElementSetSummary extends Omit<V1ElementSetSummary, 'source' | 'uploadedBy'> {
  /** The formats the engine reads; a reader shows any other as it came. */
  source: ElementSetSource | (string & {});
  /** Who stored the set: a member's name or "key <name>"; readers also take a { name, email } object. */
  uploadedBy: string | { name: string; email?: string } | null;
  /** Figures for the history chart (GET .../element-sets only). */
  meanMotionRevPerDay?: number;
  apogeeAltKm?: number;
  perigeeAltKm?: number;
}

/** The `/v1/satellites/{id}/elements` object (the engine's derived elements, `staleness` included). */
export type Derived = DerivedElements;

export interface Satellite extends Pick<V1Satellite, 'id' | 'name' | 'catalogNumber'> {
  description: string | null;
}

export interface SatelliteListItem extends Satellite {
  current: ElementSetSummary | null;
  derived: Derived | null;
}

/** What /v1 writes, the console reads: these fail to compile when the two drift apart. */
type Reads<Written extends Read, Read> = [Written, Read];
type _ReadsSatellite = Reads<V1Satellite, SatelliteListItem>;
type _ReadsSummary = Reads<V1ElementSetSummary, ElementSetSummary>;

/** One entry of an upload report, as /v1 documents it (`duplicate`: accepted, but the same as a set the satellite already holds). */
export type UploadReportEntry = V1ReportEntry;

export interface UploadReport {
  report: UploadReportEntry[];
  accepted: number;
  rejected: number;
}

/** Keplerian elements typed by hand (angles in degrees, epoch ISO 8601 UTC): what the engine's fromKeplerian takes. */
export type KeplerInput = KeplerianInput;

export type ExportFormat = 'tle' | 'omm-kvn' | 'omm-xml' | 'omm-json';

export type KeyKind = 'browser' | 'server';
/**
 * active: in use; retiring: replaced, still answering until it is quiet (or its retire-by date);
 * retired: replaced and no longer answering; expired: past expiresAt; revoked: stopped by hand.
 */
export type KeyState = 'active' | 'retiring' | 'retired' | 'expired' | 'revoked';
export type KeyScope = 'read' | 'element-sets:write' | (string & {});

export interface ApiKey {
  id: string;
  kind: KeyKind;
  name: string;
  lastFour: string;
  origins: string[];
  scopes: KeyScope[];
  rateLimitPerMin: number | null;
  expiresAt: string | null;
  revokedAt: string | null;
  replacedById: string | null;
  /** The key this one replaced (set by the key list and the rotate answer). */
  replacesId: string | null;
  replacedAt: string | null;
  /** A replaced key retires once unused this many minutes (null: only retireBy applies). */
  retireQuietMinutes: number | null;
  /** A replaced key retires at this time at the latest. */
  retireBy: string | null;
  /** When a replaced key retires if nothing calls it again (past: when it retired). */
  retiresAt: string | null;
  lastUsedAt: string | null;
  createdAt: string;
  state: KeyState;
  /** What uses the key (the console's key routes always send it). */
  use: KeyUse;
}

/** An origin that called a key lately ('' = requests that named none, e.g. a backend). */
export interface KeyOrigin {
  origin: string;
  count: number;
  /** Last UTC day (YYYY-MM-DD) it called. */
  lastDay: string;
}

/** What uses a key: the embeds reading with it and the origins that called it since `originsSince` (UTC day). */
export interface KeyUse {
  embeds: { id: string; name: string }[];
  origins: KeyOrigin[];
  originsSince: string;
}

/**
 * DELETE /api/orgs/:org/keys/:id answers 204 (the key stops answering and leaves the list; its
 * usage and activity keep its name), or this 409 problem while embeds still read with the key.
 */
export interface KeyInUseProblem {
  code: 'key-in-use';
  detail: string;
  /** The embeds reading with the key (on it, or on a key it replaced), by name. */
  embeds: { id: string; name: string }[];
}

/** POST /api/orgs/:org/keys/:id/rotate */
export interface KeyRotateInput {
  /** The new key's name; it must differ from the old one's. */
  name: string;
  /** The old key retires once unused this many minutes (0 = at once). */
  quietMinutes: number;
  /** ... and at the latest at this time (ISO 8601). */
  retireBy: string;
}

export interface KeyCreateInput {
  kind: KeyKind;
  name: string;
  origins?: string[];
  scopes?: KeyScope[];
  /** Whole requests per minute, 1 to 100 000; the server's default when left out. */
  rateLimitPerMin?: number;
  expiresAt?: string | null;
}

export type KeyUpdateInput = Partial<Omit<KeyCreateInput, 'kind'>>;

export type Projection = 'equal-earth' | 'globe';
export type Layer = 'footprint' | 'terminator' | 'passes' | 'graticule' | 'labels';
export type WidgetTheme = 'light' | 'dark' | 'auto';

/** Saved widget options; names follow the `<nadir-track>` attributes in camelCase. */
export interface EmbedOptions {
  projection: Projection;
  layers: Layer[];
  /** "lat,lon[,altM]", "auto" or "" for none. */
  observer: string;
  theme: WidgetTheme;
  orbitsBehind: number;
  orbitsAhead: number;
  timeZone?: string;
  locale?: string;
  /** Size the snippets use: CSS pixels as digits ("640") or a CSS length ("100%"). */
  width: string;
  height: string;
}

export interface Embed {
  id: string;
  name: string;
  satelliteIds: string[];
  options: EmbedOptions;
  apiKeyId: string | null;
  updatedAt: string;
}

/** A saved embed as the server answers it: the options as saved (the console fills missing ones with its defaults). */
export interface SavedEmbed extends Omit<Embed, 'options'> {
  options: Record<string, unknown>;
}

export interface EmbedInput {
  name: string;
  satelliteIds: string[];
  options: EmbedOptions;
  /** The browser key the embed reads with (its origins, limits and usage apply). */
  apiKeyId: string;
}

/** GET /api/orgs/:org/usage: counts per UTC day, key and route over [from, to], and the month's quota. */
export interface UsageReport {
  /** First and last UTC day counted (YYYY-MM-DD). */
  from: string;
  to: string;
  days: { day: string; count: number }[];
  /** UTC hours 'YYYY-MM-DDTHH' of the first 31 days of the range, each present. */
  hours: { hour: string; count: number }[];
  /** Answers by HTTP status; all of them count against the quota. */
  byStatus: { status: number; count: number }[];
  /** Requests by calling origin ('' = none named). */
  byOrigin: { origin: string; count: number }[];
  byKey: { apiKeyId: string; name: string; count: number }[];
  byRoute: { endpoint: string; count: number }[];
  rows: { day: string; apiKeyId: string; endpoint: string; count: number }[];
  quota: { plan: PlanId; limit: number; usedThisMonth: number; resetsAt: string };
}

export interface ActivityEvent {
  /** Increasing; the next page is the events `before` the last one's id. */
  id: number;
  action: string;
  actor: { name: string; email: string } | { keyName: string } | null;
  targetType: string;
  targetId: string | null;
  detail: unknown;
  createdAt: string;
}

export interface Plan {
  id: PlanId;
  name: string;
  monthlyRequests: number;
  priceMonthly: number;
  /** ISO 4217 code of `priceMonthly`, e.g. "EUR". */
  currency: string;
}

/** POST /api/orgs/:org/preview-token: the console's preview credential for `<nadir-track api-key>`. */
export interface PreviewToken {
  token: string;
  expiresAt: string;
  /** Seconds the token lives, counted by the server (free of this computer's clock). */
  expiresIn: number;
}

export interface Subscription {
  plan: PlanId;
  /** The provider's word: active, past_due, canceled, ... ('none' when no paid subscription backs the plan). */
  status: string;
  currentPeriodEnd: string | null;
  cancelAtPeriodEnd: boolean;
  /** After a failed payment the paid plan is kept until then. */
  graceUntil: string | null;
  /** When the organization fell back to Starter because payment stayed overdue. */
  lapsedAt: string | null;
  provider: 'none' | 'external';
}

export interface Invoice {
  id: string;
  number: string | null;
  status: string;
  /** Minor units (cents). */
  amountDue: number;
  amountPaid: number;
  currency: string;
  periodStart: string | null;
  periodEnd: string | null;
  issuedAt: string;
  /** The payment provider's pages for this invoice. */
  hostedUrl: string | null;
  pdfUrl: string | null;
}

/** GET /api/orgs/:org/billing */
export interface Billing {
  plan: PlanId;
  plans: Plan[];
  subscription: Subscription | null;
  /** False when the server has no payment provider: paid plans cannot be bought. */
  paymentsAvailable: boolean;
  /** Newest first. */
  invoices: Invoice[];
}

export type NoticeKind = 'quota' | 'stale-digest' | 'payment-failed' | 'plan-changed';

/** GET /api/orgs/:org/notices */
export interface OrgNotice {
  id: number;
  kind: NoticeKind;
  subject: string;
  body: string;
  createdAt: string;
  detail: Record<string, unknown>;
}

/** GET /api/me/notices */
export interface NoticePreference {
  kind: NoticeKind;
  label: string;
  roles: Role[];
  email: boolean;
}

/** What an organization's own systems can be told by webhook (docs/console-api.md "Webhooks"). */
export type WebhookEventType = 'element-set.accepted' | 'element-set.stale' | 'quota.threshold' | 'plan.changed';

/** An endpoint as /api answers it; the signing secret is never in it (only its last four characters). */
export interface WebhookEndpoint {
  id: string;
  url: string;
  description: string;
  events: WebhookEventType[];
  status: 'active' | 'paused';
  secretLastFour: string;
  secretRotatedAt: string | null;
  createdAt: string;
  updatedAt: string;
}

/** GET /api/orgs/:org/webhooks */
export interface WebhookEndpointList {
  endpoints: WebhookEndpoint[];
  /** The event kinds an endpoint can choose, with a sentence each. */
  eventTypes: Array<{ type: WebhookEventType; label: string }>;
  /** Most endpoints one organization may register. */
  maxEndpoints: number;
}

/** POST /api/orgs/:org/webhooks */
export interface WebhookEndpointInput {
  url: string;
  events: WebhookEventType[];
  description?: string;
}

/** PATCH /api/orgs/:org/webhooks/:id (any subset). */
export interface WebhookEndpointUpdate {
  url?: string;
  events?: WebhookEventType[];
  description?: string;
  paused?: boolean;
}

/** POST /api/orgs/:org/webhooks and POST .../webhooks/:id/rotate-secret: the secret, shown this once. */
export interface WebhookEndpointWithSecret {
  endpoint: WebhookEndpoint;
  secret: string;
}

/** pending: not tried yet; retrying: tried, tried again at nextAttemptAt; paused: its endpoint is paused. */
export type WebhookDeliveryState = 'pending' | 'retrying' | 'delivered' | 'failed' | 'paused';

export interface WebhookAttempt {
  number: number;
  startedAt: string;
  /** The endpoint's HTTP status, or null when no answer came (refused, timed out, ...). */
  statusCode: number | null;
  error: string | null;
  durationMs: number;
}

/** GET /api/orgs/:org/webhook-deliveries (newest first); GET .../:id adds `attemptList`. */
export interface WebhookDelivery {
  id: string;
  eventId: string;
  eventType: WebhookEventType | 'webhook.test';
  endpointId: string;
  endpointUrl: string;
  state: WebhookDeliveryState;
  attempts: number;
  maxAttempts: number;
  nextAttemptAt: string | null;
  lastStatusCode: number | null;
  lastError: string | null;
  deliveredAt: string | null;
  redeliveryOf: string | null;
  createdAt: string;
  attemptList?: WebhookAttempt[];
}

/** One field-level problem (problem+json `errors[]`). */
export interface FieldProblem {
  where: string;
  message: string;
  field?: string;
  line?: number;
  column?: number;
}

export interface ProblemBody {
  type?: string;
  title?: string;
  status?: number;
  detail?: string;
  code?: string;
  errors?: FieldProblem[];
}
