/**
 * What every part of the server shares for one running app: configuration, database, logger,
 * and a list of things to close on shutdown. Parts register their own cleanup with onClose.
 */
import type { Sequelize } from 'sequelize';
import type { Logger } from 'pino';
import type { Config } from './config.ts';

export interface AppContext {
  config: Config;
  sequelize: Sequelize;
  logger: Logger;
  /** Register cleanup to run (in reverse order) when the app closes: flush usage, stop SMTP... */
  onClose(fn: () => Promise<void> | void): void;
  /** Services that parts attach at start-up. Each part adds its own field here (add, never rename). */
  services: AppServices;
}

// eslint-disable-next-line @typescript-eslint/no-empty-object-type
export interface AppServices {}

