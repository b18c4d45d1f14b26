/** Public entry of the console workspace: what tests and other tools may import. */
export { ApiClient, ApiError, api } from './api/client.ts';
export type * from './api/types.ts';
export { createAppRouter } from './router/index.ts';
export { can } from './lib/roles.ts';
export { scriptSnippet, iframeSnippet, inlineSnippet, widgetAttributes } from './lib/snippets.ts';
