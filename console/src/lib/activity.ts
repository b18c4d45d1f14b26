/**
 * Activity-log entries as sentences and labelled values: "Rate limit: 600 per minute",
 * "Last four: R-4U", "Role: Editor → Viewer", dates in the reader's own locale, and names in place
 * of the ids the answer carries where the console knows them. Ids it cannot name and internal
 * references (invitation and element-set ids) are left out rather than shown raw.
 */
import type { ActivityEvent, Role } from '../api/types.ts';
import { ROLE_LABELS } from './roles.ts';

/** Names the console can put in place of ids (from the lists it has loaded). */
export interface ActivityNames {
  key?: (id: string) => string | undefined;
  satellite?: (id: string) => string | undefined;
  member?: (id: string) => string | undefined;
}

export interface ActivityDetail {
  label: string;
  value: string;
}

const VERBS: Record<string, string> = {
  'key.create': 'created a key',
  'key.update': 'changed a key',
  'key.rotate': 'replaced a key',
  'key.revoke': 'revoked a key',
  'key.delete': 'deleted a key',
  'member.invite': 'invited a member',
  'member.invite-revoke': 'withdrew an invitation',
  'member.join': 'joined',
  'member.role': 'changed a role',
  'member.remove': 'removed a member',
  'satellite.create': 'registered a satellite',
  'satellite.update': 'changed a satellite',
  'satellite.delete': 'deleted a satellite',
  'element-set.upload': 'added element sets',
  'embed.create': 'created an embed',
  'embed.update': 'changed an embed',
  'embed.delete': 'deleted an embed',
  'org.create': 'created the organization',
  'org.rename': 'renamed the organization',
  'org.transfer': 'transferred ownership',
  'billing.plan': 'changed the plan',
  'webhook.create': 'added a webhook endpoint',
  'webhook.update': 'changed a webhook endpoint',
  'webhook.delete': 'deleted a webhook endpoint',
  'webhook.rotate-secret': 'made a new webhook signing secret',
};

export function activityVerb(action: string): string {
  return VERBS[action] ?? action.replace(/[.-]/g, ' ');
}

const LABELS: Record<string, string> = {
  name: 'Name',
  kind: 'Kind',
  lastFour: 'Last four',
  previousLastFour: 'Old key’s last four',
  newLastFour: 'New key’s last four',
  origins: 'Origins',
  scopes: 'Scopes',
  rateLimitPerMin: 'Rate limit',
  expiresAt: 'Expires',
  graceHours: 'Grace period',
  graceUntil: 'Old key answers until',
  newName: 'New key',
  quietMinutes: 'Old key retires after',
  retireBy: 'Old key retires by',
  embedsMoved: 'Embeds moved to the new key',
  state: 'State when deleted',
  lastUsedAt: 'Last used',
  projection: 'Map',
  orbitsBehind: 'Orbits behind',
  orbitsAhead: 'Orbits ahead',
  observer: 'Observer',
  layers: 'Layers',
  theme: 'Theme',
  timeZone: 'Time zone',
  locale: 'Language',
  width: 'Width',
  height: 'Height',
  email: 'E-mail',
  role: 'Role',
  previousRole: 'Their role before',
  previousOwnerNowAdmin: 'Previous owner, now admin',
  satellite: 'Satellite',
  satelliteIds: 'Satellites',
  apiKeyId: 'Browser key',
  how: 'From',
  accepted: 'Accepted',
  duplicates: 'Already held',
  rejected: 'Rejected',
  renamedFrom: 'Renamed from',
  descriptionChanged: 'Description',
  changed: 'Changed',
  provider: 'Payment',
  options: 'Display options',
  description: 'Description',
  url: 'URL',
  previousUrl: 'Old URL',
  events: 'Events',
  status: 'State',
};

/** What `from` and `to` are, per action. */
const FROM_TO: Record<string, string> = { 'member.role': 'Role', 'org.rename': 'Name', 'billing.plan': 'Plan' };

/** References with no meaning to a reader. */
const HIDDEN = new Set(['invitationId', 'elementSetIds', 'newKeyId', 'id']);

const ROLE_KEYS = new Set(['role', 'previousRole']);

export function labelOf(key: string): string {
  if (LABELS[key]) return LABELS[key];
  const words = key.replace(/([a-z0-9])([A-Z])/g, '$1 $2').toLowerCase();
  return words.charAt(0).toUpperCase() + words.slice(1);
}

const ISO = /^\d{4}-\d\d-\d\dT\d\d:\d\d/;

/** "1 Dec 2026, 22:43" in the reader's own locale and time zone. */
export function formatLocalDateTime(iso: string, locale?: string): string {
  const d = new Date(iso);
  if (Number.isNaN(d.getTime())) return iso;
  return new Intl.DateTimeFormat(locale, { dateStyle: 'medium', timeStyle: 'short' }).format(d);
}

function roleLabel(v: unknown): string {
  return typeof v === 'string' && v in ROLE_LABELS ? ROLE_LABELS[v as Role] : String(v);
}

function capital(s: string): string {
  return s.charAt(0).toUpperCase() + s.slice(1);
}

function listOf(items: string[]): string {
  return items.length <= 1 ? (items[0] ?? '') : `${items.slice(0, -1).join(', ')} and ${items.at(-1)}`;
}

/** One value as text, or null to leave the entry out. */
function valueOf(key: string, v: unknown, names: ActivityNames, locale?: string): string | null {
  if (v === undefined) return null;
  switch (key) {
    case 'rateLimitPerMin':
      return typeof v === 'number' ? `${v.toLocaleString(locale)} per minute` : 'the plan’s default';
    case 'kind':
      return v === 'browser' ? 'Browser key' : v === 'server' ? 'Server key' : String(v);
    case 'origins':
      // A server key has none, and saying so is noise.
      return Array.isArray(v) ? (v.length ? v.join(', ') : null) : String(v);
    case 'scopes':
      return Array.isArray(v) ? v.map((s) => (s === 'element-sets:write' ? 'upload element sets' : String(s))).join(', ') : String(v);
    case 'expiresAt':
    case 'graceUntil':
      return typeof v === 'string' && v ? formatLocalDateTime(v, locale) : 'never';
    case 'retireBy':
      return typeof v === 'string' && v ? formatLocalDateTime(v, locale) : null;
    case 'lastUsedAt':
      return typeof v === 'string' && v ? formatLocalDateTime(v, locale) : 'never';
    case 'state':
      return typeof v === 'string' ? ({ active: 'active', retiring: 'retiring when quiet', retired: 'retired', expired: 'expired', revoked: 'revoked' }[v] ?? v) : null;
    case 'quietMinutes': {
      if (typeof v !== 'number') return null;
      if (v === 0) return 'retired at once';
      const [n, unit] = v % 1440 === 0 ? [v / 1440, 'day'] : v % 60 === 0 ? [v / 60, 'hour'] : [v, 'minute'];
      return `${n.toLocaleString(locale)} ${unit}${n === 1 ? '' : 's'} without use`;
    }
    case 'projection':
      return v === 'globe' ? 'globe' : v === 'equal-earth' ? 'flat map' : v === null ? 'default' : String(v);
    case 'observer':
      return v === null || v === '' ? 'none' : String(v);
    case 'graceHours':
      return typeof v === 'number' ? (v === 0 ? 'none, stopped at once' : `${v} ${v === 1 ? 'hour' : 'hours'}`) : String(v);
    case 'descriptionChanged':
      return v === true ? 'changed' : null;
    case 'how': {
      if (v === 'text') return 'pasted text';
      if (v === 'kepler') return 'typed Keplerian elements';
      if (typeof v === 'string' && v.startsWith('files:')) return `files ${v.slice(6).trim()}`;
      return String(v);
    }
    case 'apiKeyId': {
      if (typeof v !== 'string') return null;
      return names.key?.(v) ?? 'a key no longer listed';
    }
    case 'satelliteIds': {
      if (!Array.isArray(v)) return null;
      const known = v.map((id) => names.satellite?.(String(id))).filter((n): n is string => !!n);
      const gone = v.length - known.length;
      return listOf([...known, ...(gone ? [`${gone} no longer registered`] : [])]) || 'none';
    }
    case 'previousOwnerNowAdmin':
      return typeof v === 'string' ? (names.member?.(v) ?? null) : null;
    case 'changed':
      return Array.isArray(v) ? v.map((k) => labelOf(String(k)).toLowerCase()).join(', ') : String(v);
    case 'provider':
      return v === 'none' ? null : String(v);
    default:
      break;
  }
  if (ROLE_KEYS.has(key)) return roleLabel(v);
  if (v === null || v === '') return 'none';
  if (typeof v === 'boolean') return v ? 'yes' : 'no';
  if (typeof v === 'number') return v.toLocaleString(locale);
  if (typeof v === 'string') return ISO.test(v) ? formatLocalDateTime(v, locale) : v;
  if (Array.isArray(v) && v.every((x) => typeof x !== 'object')) return v.join(', ');
  return null;
}

function fromTo(action: string, key: string, from: unknown, to: unknown, names: ActivityNames, locale?: string): string {
  const one = (v: unknown) => {
    if (action === 'member.role' || ROLE_KEYS.has(key)) return roleLabel(v);
    if (action === 'billing.plan' && typeof v === 'string') return capital(v);
    return valueOf(key, v, names, locale) ?? 'none';
  };
  return `${one(from)} → ${one(to)}`;
}

/** The labelled values of an event's `detail`, in the order the server wrote them. */
export function activityDetails(e: Pick<ActivityEvent, 'action' | 'detail'>, names: ActivityNames = {}, locale?: string): ActivityDetail[] {
  const d = e.detail;
  if (d === null || d === undefined) return [];
  if (typeof d !== 'object' || Array.isArray(d)) return [{ label: 'Detail', value: String(d) }];
  const rec = d as Record<string, unknown>;
  const out: ActivityDetail[] = [];
  if ('from' in rec && 'to' in rec) out.push({ label: FROM_TO[e.action] ?? 'Changed', value: fromTo(e.action, 'value', rec.from, rec.to, names, locale) });
  for (const [key, v] of Object.entries(rec)) {
    if (key === 'from' || key === 'to' || HIDDEN.has(key)) continue;
    if (key === 'changes' && v && typeof v === 'object') {
      for (const [field, change] of Object.entries(v as Record<string, unknown>)) {
        const c = change as { from?: unknown; to?: unknown } | null;
        if (c && typeof c === 'object' && 'to' in c) out.push({ label: labelOf(field), value: fromTo(e.action, field, c.from, c.to, names, locale) });
      }
      continue;
    }
    const value = valueOf(key, v, names, locale);
    if (value !== null) out.push({ label: labelOf(key), value });
  }
  return out;
}
