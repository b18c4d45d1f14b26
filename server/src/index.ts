/**
 * Entry point: read configuration, open the database, seed the demo when asked, listen,
 * and shut down cleanly on SIGTERM / SIGINT (usage counters are flushed first).
 */
import type { Server } from 'node:http';
import { createApp } from './app.ts';
import { loadConfig } from './config.ts';

const config = loadConfig();
const { app, context, close } = await createApp(config);
const { logger } = context;

const server: Server = app.listen(config.PORT, config.HOST, () => {
  const address = server.address();
  const port = typeof address === 'object' && address ? address.port : config.PORT;
  logger.info({ port }, `Nadirline listening on http://localhost:${port}`);
  process.stdout.write(`\nNadirline is running at http://localhost:${port}/\n`);
});

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
