/** The console's live-preview credential (docs/console-api.md "Live previews"). */
import type { PreviewToken } from '@nadirline/shared/contract';
import type { AppContext } from '../../context.ts';
import { orgAuth } from '../../http/roles.ts';
import { issuePreviewToken } from '../../services/preview-token.ts';
import { ApiRoutes } from './routes.ts';

export function previewRoutes(ctx: AppContext): ApiRoutes {
  const r = new ApiRoutes();

  // Any member: the token reads, from this server's own pages only, what the member can already see.
  r.post('/orgs/:org/preview-token', 'preview.issue', (_req, res) => {
    const now = Date.now();
    const { token, expiresAt } = issuePreviewToken(ctx.config.sessionSecret, orgAuth(res).organization.id, now);
    const answer: PreviewToken = { token, expiresAt: expiresAt.toISOString(), expiresIn: Math.floor((expiresAt.getTime() - now) / 1000) };
    res.json(answer);
  });

  return r;
}
