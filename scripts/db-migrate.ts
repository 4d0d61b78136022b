import { openDatabaseServer, redact } from '@registry/data';

import { ConfigError, parseConfig } from '../apps/api/src/config/config.schema';
import { databaseServerOptions } from '../apps/api/src/config/database-server-options';

/** `npm run db:migrate`: applies pending migrations (starting the embedded server if no DATABASE_URL) and exits. */
async function main(): Promise<void> {
  const config = parseConfig(process.env);
  const server = await openDatabaseServer(databaseServerOptions(config, (m) => console.log(m)));
  const { applied, alreadyApplied } = server.migrations;
  console.log(
    `${applied.length} migration(s) applied, ${alreadyApplied} already in place — ${server.embedded ? server.description : redact(server.url)}`,
  );
  await server.stop();
}

main().catch((err: unknown) => {
  console.error(err instanceof ConfigError ? err.message : `Migration failed: ${(err as Error).message}`);
  process.exit(1);
});
