/** Invented demo data for the specs. */
import type { ApiKey, Membership, Role, SessionInfo, User } from '../api/types.ts';

export const user: User = { id: 'u1', email: 'ada@kestrel.example', name: 'Ada Quill', emailVerified: true, createdAt: '2031-01-01T00:00:00Z' };

export function session(role: Role | null, extra: Partial<SessionInfo> = {}): SessionInfo {
  const memberships: Membership[] = role ? [{ organization: { id: 'org1', name: 'Kestrel Science Centre', plan: 'mission' }, role }] : [];
  return { user: role ? user : null, memberships, csrfToken: 'csrf-1', ...extra };
}

export function key(over: Partial<ApiKey> = {}): ApiKey {
  return {
    id: 'k1',
    kind: 'browser',
    name: 'Public website',
    lastFour: 'x7Qa',
    origins: ['https://www.kestrel.example'],
    scopes: ['read'],
    rateLimitPerMin: 600,
    expiresAt: null,
    revokedAt: null,
    replacedById: null,
    replacesId: null,
    replacedAt: null,
    retireQuietMinutes: null,
    retireBy: null,
    retiresAt: null,
    lastUsedAt: null,
    createdAt: '2031-01-01T00:00:00Z',
    state: 'active',
    use: { embeds: [], origins: [], originsSince: '2030-12-26' },
    ...over,
  };
}
