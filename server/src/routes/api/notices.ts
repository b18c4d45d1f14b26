/** Notices in the console and each member's e-mail switches (docs/console-api.md "Notices"). */
import { z } from 'zod';
import type { AppContext } from '../../context.ts';
import { orgAuth, userAuth } from '../../http/roles.ts';
import { parseBody } from '../../http/validate.ts';
import { NOTICE_KIND_IDS, listNotices, noticePreferences, setNoticePreferences } from '../../services/notices.ts';
import { ApiRoutes } from './routes.ts';

const PreferencesBody = z
  .object(Object.fromEntries(NOTICE_KIND_IDS.map((k) => [k, z.boolean({ message: 'true (send e-mail) or false (do not).' }).optional()])) as Record<(typeof NOTICE_KIND_IDS)[number], z.ZodOptional<z.ZodBoolean>>)
  .strict();

export function noticeRoutes(_ctx: AppContext): ApiRoutes {
  const r = new ApiRoutes();

  r.get('/orgs/:org/notices', 'notices.read', async (_req, res) => {
    const auth = orgAuth(res);
    res.json({ notices: await listNotices(auth.organization.id, auth.role) });
  });

  r.get('/me/notices', 'account.notices', async (_req, res) => {
    res.json({ preferences: await noticePreferences(userAuth(res).id) });
  });

  r.patch('/me/notices', 'account.notices', async (req, res) => {
    const body = parseBody(PreferencesBody, req);
    res.json({ preferences: await setNoticePreferences(userAuth(res).id, body) });
  });

  return r;
}
