/**
 * The first steps of a new organization, each ticked from what the organization really holds:
 * a satellite, an element set, an active browser key, an embed, and an embed or browser key
 * called from a page that is not this console (in the last 7 days, as the key list counts).
 */
import type { ApiKey, Embed, SatelliteListItem } from '../api/types.ts';

export type OnboardingStep = 'satellite' | 'elements' | 'key' | 'embed' | 'pasted';

export interface OnboardingState {
  satellites: readonly SatelliteListItem[];
  keys: readonly ApiKey[];
  embeds: readonly Embed[];
  /** This console's own origin: calls from it are previews and hosted embed pages, not a pasted snippet. */
  selfOrigin: string;
}

export const ONBOARDING_STEPS: OnboardingStep[] = ['satellite', 'elements', 'key', 'embed', 'pasted'];

export function onboardingDone(s: OnboardingState): Record<OnboardingStep, boolean> {
  const browserKeys = s.keys.filter((k) => k.kind === 'browser');
  const self = s.selfOrigin.toLowerCase();
  return {
    satellite: s.satellites.length > 0,
    elements: s.satellites.some((x) => x.current !== null),
    key: browserKeys.some((k) => k.state === 'active'),
    embed: s.embeds.length > 0,
    pasted: browserKeys.some((k) => k.use.origins.some((o) => o.origin !== '' && o.origin.toLowerCase() !== self)),
  };
}
