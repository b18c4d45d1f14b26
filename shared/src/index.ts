/**
 * @nadirline/shared: the Nadirline orbit engine. Pure functions over satellite.js's SGP4:
 * element sets in and out (./elements), propagation, tracks, derived elements, Sun and Earth,
 * observers and passes (./orbit). No I/O, no DOM, no Node globals.
 */
export type * from './types.ts';
export * from './elements/index.ts';
export * from './orbit/index.ts';
export * from './markup.ts';
export * from './calendar/ical.ts';
