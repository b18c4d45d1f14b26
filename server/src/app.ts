/**
 * Builds the Express app. Tests import createApp and drive it over real HTTP (supertest);
 * index.ts opens the database through it, listens and shuts down cleanly.
 */
import type { IncomingMessage, ServerResponse } from 'node:http';
import compression from 'compression';
import express from 'express';
import pino from 'pino';
import { pinoHttp } from 'pino-http';
import type { Config } from './config.ts';
import type { AppContext } from './context.ts';
import { openDatabase } from './db/index.ts';
import { bodyTimeout, refuseControlChars } from './http/input-guards.ts';
import { getOverLimitGate, overLimitFront } from './http/over-limit.ts';
import { errorHandler, notFoundHandler } from './http/problem.ts';
import { createApiRouter } from './routes/api/index.ts';
import { createSiteRouter } from './routes/site.ts';
import { createPaymentsWebhookRouter } from './routes/payments-webhook.ts';
import { createV1Router } from './routes/v1/index.ts';
import { getEmbedService } from './services/embeds.ts';
import { getKeyService } from './services/keys.ts';
import { registerNoticeJobs } from './services/notices.ts';
import { getPayments } from './services/payments.ts';
import { installTestClock } from './services/clock.ts';
import { startScheduler } from './services/scheduler.ts';
import { getQuotaService } from './services/quota.ts';
import { getSatelliteService } from './services/satellites.ts';
import { connectShared } from './services/shared.ts';
import { getUsageRecorder } from './services/usage.ts';
import { startWebhookWorker } from './services/webhooks.ts';

/** Keys and one-time tokens (in queries, invitation links and their API paths) never reach the logs. */
export function redactUrl(url: string): string {
  return url
    .replace(/([?&](?:key|token)=)[^&#]+/gi, '$1[hidden]')
    .replace(/(\/(?:api\/invitations|invite)\/)[^/?#]+/gi, '$1[hidden]');
}

export interface NadirlineApp {
  app: express.Express;
  /**
   * What the HTTP server should call: the over-limit gate, then the app. Refusing a key that is
   * over its limit here skips Express's own work per request as well (index.ts listens with it).
   */
  handler: (req: IncomingMessage, res: ServerResponse) => void;
  context: AppContext;
  /** Flush usage, stop the fake SMTP server, close the database. Idempotent. */
  close(): Promise<void>;
}

export async function createApp(config: Config): Promise<NadirlineApp> {
  const app = express();
  app.disable('x-powered-by');
  try {
    app.set('trust proxy', config.trustProxy);
  } catch (err) {
    throw new Error(`Invalid configuration:\n  TRUST_PROXY: ${(err as Error).message}`, { cause: err });
  }
  const logger = pino({ level: config.isTest ? 'silent' : config.LOG_LEVEL });
  const sequelize = await openDatabase(config);
  const closers: Array<() => Promise<void> | void> = [];
  const context: AppContext = {
    config,
    sequelize,
    logger,
    onClose: (fn) => closers.push(fn),
    services: {},
  };
  // Redis first (REDIS_URL): the services below keep their counters and caches in step through it.
  try {
    await connectShared(context);
  } catch (err) {
    await sequelize.close();
    throw new Error(`Could not connect to Redis at REDIS_URL: ${(err as Error).message}`, { cause: err });
  }
  if (config.DATABASE_URL && !config.REDIS_URL) {
    logger.warn('DATABASE_URL without REDIS_URL: rate limits, quota counts and caches stay in this process; run one process only, or set REDIS_URL');
  }
  // Keys, usage, quota, satellites and embeds (the console's /api routes call them too).
  getKeyService(context);
  getUsageRecorder(context);
  getQuotaService(context);
  getEmbedService(context);
  getSatelliteService(context);
  // The payment provider's client (and the local fake outside production).
  await getPayments(context);
  // Notices and scheduled work (grace ends, quota thresholds, the daily stale digest); run once
  // across processes through job_leases. Tests drive runDueJobs with their own clock instead.
  installTestClock(context);
  registerNoticeJobs(context);
  if (!config.isTest) startScheduler(context);
  // Webhooks out: due deliveries are claimed one at a time, so every process may send them.
  if (config.WEBHOOK_WORKER ?? !config.isTest) startWebhookWorker(context);

  // Keys over their rate limit are refused first: no log line, no routing, no limiter work.
  // The server calls the gate before Express (handler below); in-process callers get it here.
  const keys = getKeyService(context);
  const front = overLimitFront(getOverLimitGate(context), (text) => keys.cachedKeyIdFor(text));
  app.use(front);
  // Request lines are logged at info; below that level the middleware would only cost time.
  if (logger.isLevelEnabled('info')) app.use(
    pinoHttp({
      logger,
      // Keep logs to the request line and outcome; never log keys or cookies.
      serializers: {
        req: (req: { method: string; url: string }) => ({ method: req.method, url: redactUrl(req.url) }),
        res: (res: { statusCode: number }) => ({ statusCode: res.statusCode }),
      },
    }),
  );

  // Before any route: a body that never arrives, and control characters in the URL.
  app.use(bodyTimeout(config.BODY_TIMEOUT_MS));
  app.use(refuseControlChars);

  // Text answers (widget script, map data, JSON, pages) go out gzip- or brotli-compressed when the
  // client accepts it; fonts and images are already compressed and are left alone (the filter
  // looks at the content type). Answers under 1 KB are not worth it.
  app.use(compression({ threshold: 1024 }));

  app.get('/healthz', (_req, res) => {
    res.json({ ok: true });
  });
  // Raw body, before the console's JSON, session and CSRF stack.
  app.use(createPaymentsWebhookRouter(context));
  app.use('/v1', await createV1Router(context));
  app.use('/api', await createApiRouter(context));
  if (!config.isProduction) app.use('/dev', await (await import('./routes/dev.ts')).createDevRouter(context));
  app.use(await createSiteRouter(context));

  app.use(notFoundHandler);
  // Stack traces go to the log; answers carry them only under NODE_ENV=test.
  app.use(errorHandler({ exposeInternals: config.isTest, logger }));

  let closed: Promise<void> | undefined;
  const close = () => {
    closed ??= (async () => {
      for (const fn of closers.reverse()) {
        try {
          await fn();
        } catch (err) {
          logger.error({ err }, 'error while closing');
        }
      }
      await sequelize.close();
    })();
    return closed;
  };
  const handler = (req: IncomingMessage, res: ServerResponse) => {
    front(req as express.Request, res as express.Response, () => app(req, res));
  };
  return { app, handler, context, close };
}
