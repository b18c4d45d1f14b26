/**
 * Public API of the Nadirline orbit engine's computation: propagation, ground tracks, derived
 * elements, the Sun and the Earth, observers and passes. Element-set parsing lives in ../elements.
 */
export * from './constants.ts';
export {
  julianDateFromMs,
  msFromJulianDate,
  gmstRad,
  wrapLonDeg,
  wrap360Deg,
  eciToEcef,
  cartesianToGeodetic,
  geodeticToEcef,
  sunVector,
  isSunlit,
} from './frames.ts';
export type { Vec3, Geodetic, SunVector } from './frames.ts';
export { propagateAt, satrecEpochMs } from './propagate.ts';
export type { OrbitState, PropagationResult, PropagationErrorCode, PropagationFailure } from './propagate.ts';
export { gridCount, sampleTrack, splitAtAntimeridian, trackGrid, trackToGeoJSON, DEFAULT_MAX_TRACK_SAMPLES } from './track.ts';
export type { TrackWindow, TrackErrorCode, TrackGeoJsonOptions } from './track.ts';
export {
  deriveElements,
  stalenessOf,
  nodalPrecessionDegPerDay,
  semiMajorAxisKmFromMeanMotion,
} from './elements-derived.ts';
export type { DerivedElements, Staleness } from './elements-derived.ts';
export {
  subsolarPoint,
  antipode,
  smallCircleRing,
  capPolygon,
  terminator,
  twilightBands,
  footprintRadius,
  footprintCircle,
} from './sun-earth.ts';
export type { TwilightBands, FootprintRadius } from './sun-earth.ts';
export { lookAngles, lookAnglesFromEcef, observerSite, validateObserver } from './observer.ts';
export type { Observer, LookAngles, ObserverErrorCode, ObserverSite } from './observer.ts';
export { findPasses, MAX_PASS_SEARCH_DAYS } from './passes.ts';
export type { Pass, PassList, PassOptions, PassErrorCode } from './passes.ts';
/**
 * Reference pass scanner (one look a second): slow on purpose, for tests and `npm run bench` to
 * check `findPasses` against. Not for serving requests.
 */
export { findPassesBruteForce } from './passes-bruteforce.ts';
export { byEpoch, indexInForce, setInForce, ageDaysAt, piecewiseWindows, sampleTrackAcrossSets, findPassesAcrossSets } from './history.ts';
export type { HasEpoch, WindowPart, PropagatableSet, TrackPart, PassFromSet } from './history.ts';
export { checkContinuity, classify, carryForward, CONTINUITY_POLICY, CONTINUITY_WORDS } from './continuity.ts';
export type { ContinuityClass, ContinuityReport, ContinuityErrorCode } from './continuity.ts';
export { skyPath, skyPathStepS, SKY_PATH_STEP_S, SKY_PATH_MAX_POINTS } from './sky-path.ts';
export type { SkyPoint } from './sky-path.ts';
