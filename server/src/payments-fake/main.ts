/**
 * The fake payment provider on its own (no Nadirline server in the same process):
 *
 *   FAKE_PAYMENTS_PORT=12111 FAKE_PAYMENTS_WEBHOOK_URL=http://127.0.0.1:8080/webhooks/payments \
 *     npm run fake-payments -w server
 *
 * Then start Nadirline with PAYMENTS_FAKE=false PAYMENTS_API_BASE=http://127.0.0.1:12111 and the
 * same PAYMENTS_SECRET_KEY / PAYMENTS_WEBHOOK_SECRET (both default to the fake's local test
 * values). Listens on 127.0.0.1 only; stop it with SIGTERM or Ctrl-C.
 */
import { loadConfig } from '../config.ts';
import { FAKE_SECRET_KEY, FAKE_WEBHOOK_SECRET, fakePrices } from '../services/payments.ts';
import { createFakeProvider } from './app.ts';

const config = loadConfig();
const fake = createFakeProvider({
  secretKey: config.PAYMENTS_SECRET_KEY ?? FAKE_SECRET_KEY,
  webhookSecret: config.PAYMENTS_WEBHOOK_SECRET ?? FAKE_WEBHOOK_SECRET,
  prices: fakePrices(config),
  webhookUrl: config.FAKE_PAYMENTS_WEBHOOK_URL ?? null,
  log: (msg) => process.stderr.write(`${msg}\n`),
});
const url = await fake.listen(config.FAKE_PAYMENTS_PORT || 12111, '127.0.0.1');
process.stdout.write(`Fake payment provider at ${url} (webhooks to ${config.FAKE_PAYMENTS_WEBHOOK_URL ?? 'nowhere yet: set FAKE_PAYMENTS_WEBHOOK_URL'})\n`);
const stop = () => void fake.close().then(() => process.exit(0));
process.on('SIGTERM', stop);
process.on('SIGINT', stop);
