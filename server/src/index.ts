/**
 * Entry point: read configuration, open the database, listen, seed the demo when asked (after
 * listening, so the demo browser key can name the real port), and shut down cleanly on
 * SIGTERM / SIGINT (usage counters are flushed first).
 */
import type { Server } from 'node:http';
import { createApp } from './app.ts';
import { loadConfig } from './config.ts';
import { seedDemo } from './seed/demo.ts';

const config = loadConfig();
const { app, context, close } = await createApp(config);
const { logger } = context;

const server: Server = await new Promise<Server>((resolve, reject) => {
  const s = app.listen(config.PORT, config.HOST, (err?: Error) => (err ? reject(err) : resolve(s)));
});
const address = server.address();
const port = typeof address === 'object' && address ? address.port : config.PORT;
logger.info({ port }, `Nadirline listening on http://localhost:${port}`);
// The built-in fake payment provider sends its webhook events to this process.
const loopback = ['0.0.0.0', '::', '127.0.0.1', 'localhost'].includes(config.HOST) ? '127.0.0.1' : config.HOST;
context.services.payments?.fake?.setWebhookUrl(`http://${loopback.includes(':') ? `[${loopback}]` : loopback}:${port}/webhooks/payments`);

if (config.demo) {
  const demo = await seedDemo(context, { port });
  process.stdout.write(
    `\nDemo data ready (${demo.created ? 'seeded now' : 'kept from an earlier start'}).\n` +
      `Sign in at ${demo.credentials.signInUrl} with a user from ${demo.credentialsFile}\n` +
      `  e.g. ${demo.credentials.users[0]?.email} / ${demo.credentials.users[0]?.password}\n` +
      `Try: curl -H "Authorization: Bearer ${demo.credentials.serverKey}" http://localhost:${port}/v1/satellites\n`,
  );
}
process.stdout.write(`\nNadirline is running at http://localhost:${port}/\n`);

let stopping = false;
async function shutdown(signal: string): Promise<void> {
  if (stopping) return;
  stopping = true;
  logger.info({ signal }, 'shutting down');
  server.close();
  server.closeAllConnections();
  await close();
  process.exit(0);
}
process.on('SIGTERM', () => void shutdown('SIGTERM'));
process.on('SIGINT', () => void shutdown('SIGINT'));
