import type { DatabaseServerOptions } from '@registry/data';

import type { AppConfig } from './config.schema';

/** How the service and the command-line tools reach their database, from the one configuration. */
export function databaseServerOptions(config: AppConfig, log: (message: string) => void): DatabaseServerOptions {
  return {
    ...(config.database.url ? { url: config.database.url } : {}),
    ...(config.database.migrationUrl ? { migrationUrl: config.database.migrationUrl } : {}),
    dataDir: config.database.dataDir,
    embeddedPort: config.database.embeddedPort,
    log,
  };
}
