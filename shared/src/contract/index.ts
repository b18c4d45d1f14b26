/**
 * @nadirline/shared/contract: the one API contract of Nadirline.
 *   ./v1.ts   the keyed /v1 API as data: caps, zod schemas of every request, answer schemas, the
 *             route table (the server validates and builds OpenAPI from it) and the answer types;
 *   ./api.ts  the console API (/api) answer and input shapes, types only;
 *   ./hints.ts what a field expects, in words, for readable validation messages.
 * Pure: no server, DOM or Node imports. The server imports values; the console and the widget
 * import types only (`import type`), so nothing of it reaches their bundles.
 */
export * from './hints.ts';
export * from './v1.ts';
export type * from './api.ts';
