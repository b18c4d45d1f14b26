/**
 * Entry point: read configuration, open the database, listen, seed the demo when asked (after
 * listening, so the demo browser key can name the real port), and shut down cleanly on
 * SIGTERM / SIGINT (usage counters are flushed first).
 */
import http, { type Server } from 'node:http';
import { createApp } from './app.ts';
import { loadConfig, noteListening } from './config.ts';
import { seedDemo } from './seed/demo.ts';

const config = loadConfig();
const { handler, context, close } = await createApp(config);
const { logger } = context;

const server: Server = await new Promise<Server>((resolve, reject) => {
  const s = http.createServer(handler);
  s.once('error', reject);
  s.listen(config.PORT, config.HOST, () => resolve(s));
});
const address = server.address();
const port = typeof address === 'object' && address ? address.port : config.PORT;
noteListening(config, port);
logger.info({ port, host: config.HOST }, `Nadirline listening on ${config.HOST} port ${port}`);
// The built-in fake payment provider sends its webhook events to this process.
const loopback = ['0.0.0.0', '::', '127.0.0.1', 'localhost'].includes(config.HOST) ? '127.0.0.1' : config.HOST;
context.services.payments?.fake?.setWebhookUrl(`http://${loopback.includes(':') ? `[${loopback}]` : loopback}:${port}/webhooks/payments`);

if (config.demo) {
  const demo = await seedDemo(context, { port });
  process.stdout.write(
    `\nDemo data ready (${demo.created ? 'seeded now' : 'kept from an earlier start'}).\n` +
      `Sign in at ${demo.credentials.signInUrl} with a user from ${demo.credentialsFile}\n` +
      `(the demo users' passwords and the demo keys are in that file, readable by you only).\n`,
  );
}
const loopbackOnly = config.HOST === '127.0.0.1' || config.HOST === 'localhost' || config.HOST === '::1';
const listening = `http://${loopbackOnly ? 'localhost' : config.HOST.includes(':') ? `[${config.HOST}]` : config.HOST}:${port}/`;
process.stdout.write(
  `\nNadirline is running at ${listening}${loopbackOnly ? ' (this machine only; set HOST=0.0.0.0 to serve the network)' : ''}` +
    `${config.PUBLIC_URL ? `, public URL ${config.publicUrl}/` : ''}\n`,
);

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
