/**
 * Shapes of the console API (`/api`): the contract's own (shared/src/contract/api.ts), which the
 * server's services write. Types only, so nothing is bundled.
 */
export type * from '@nadirline/shared/contract';
