/**
 * Shapes of the console API (`/api`), as written in docs/console-api.md. Where the answer carries
 * an object of the orbit engine unchanged (derived elements, staleness, a set's source, Keplerian
 * input), the type comes from `@nadirline/shared` as a type-only import, so nothing of the engine
 * is bundled into the console and the two cannot drift apart.
 */
import type { DerivedElements, ElementSetSource, KeplerianInput, Staleness } from '@nadirline/shared';

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
  confirmSuspiciousSets?: boolean;
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


export interface ElementSetSummary {
  id: string;
  source: ElementSetSource | (string & {});
  epoch: string;
  ageDays: number;
  staleness: Staleness;
  uploadedBy: string | { name: string; email?: string } | null;
  createdAt: string;
  catalogNumber: string;
  name: string;
  /** The continuity check made when the set arrived (null for the first set; absent from older servers). */
  continuity?: Continuity | null;
  /** Held until an editor confirms it (organization setting confirmSuspiciousSets). */
  awaitingConfirmation?: boolean;
  /** Figures for the history chart (GET element-sets only). */
  meanMotionRevPerDay?: number;
  apogeeAltKm?: number;
  perigeeAltKm?: number;
}

/** The /api continuity object (docs/console-api.md). */
export interface Continuity {
  classification: 'continues' | 'manoeuvre' | 'does-not-continue' | 'not-checked';
  summary: string;
  reason: string;
  previousElementSetId: string;
  previousEpoch: string;
  spanDays: number;
  positionDifferenceKm?: number;
  radialKm?: number;
  alongTrackKm?: number;
  crossTrackKm?: number;
  alongTrackTimingS?: number;
  semiMajorAxisChangeKm?: number;
  eccentricityChange?: number;
  inclinationChangeDeg?: number;
  raanChangeDeg?: number;
  catalogNumberChanged?: boolean;
}

/** The `/v1/satellites/{id}/elements` object (the engine's derived elements, `staleness` included). */
export type Derived = DerivedElements;

export interface Satellite {
  id: string;
  name: string;
  catalogNumber: string | null;
  description: string | null;
}

export interface SatelliteListItem extends Satellite {
  current: ElementSetSummary | null;
  derived: Derived | null;
}

export interface UploadReportEntry {
  index: number;
  line: number;
  ok: boolean;
  elementSetId?: string;
  /** Accepted, but the same as a set the satellite already holds. */
  duplicate?: boolean;
  code?: string;
  field?: string;
  message?: string;
  column?: number;
  file?: string;
  continuity?: Continuity | null;
  awaitingConfirmation?: boolean;
}

export interface UploadReport {
  report: UploadReportEntry[];
  accepted: number;
  rejected: number;
}

/** Keplerian elements typed by hand (angles in degrees, epoch ISO 8601 UTC): what the engine's fromKeplerian takes. */
export type KeplerInput = KeplerianInput;

export type ExportFormat = 'tle' | 'omm-kvn' | 'omm-xml' | 'omm-json';

export type KeyKind = 'browser' | 'server';
export type KeyState = 'active' | 'grace' | 'expired' | 'revoked';
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
  graceUntil: string | null;
  lastUsedAt: string | null;
  createdAt: string;
  state: KeyState;
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

export interface EmbedInput {
  name: string;
  satelliteIds: string[];
  options: EmbedOptions;
  /** The browser key the embed reads with (its origins, limits and usage apply). */
  apiKeyId: string;
}

export interface UsageReport {
  days: { day: string; count: number }[];
  byKey: { apiKeyId: string | null; name: string; count: number }[];
  byRoute: { endpoint: string; count: number }[];
  rows: { day: string; apiKeyId: string | null; endpoint: string; count: number }[];
  quota: { plan: PlanId; limit: number; usedThisMonth: number; resetsAt: string };
}

export interface ActivityEvent {
  id: string;
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

export interface Billing {
  plan: PlanId;
  plans: Plan[];
  subscription: { status: string; currentPeriodEnd?: string | null; plan?: PlanId } | null;
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
