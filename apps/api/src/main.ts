import 'reflect-metadata';

import { createDatabase, openDatabaseServer } from '@registry/data';

import { createApp } from './app.factory';
import { ConfigError, parseConfig } from './config/config.schema';
import { createLogger } from './logging';
import { installShutdown } from './shutdown';
import { databaseServerOptions } from './config/database-server-options';

async function main(): Promise<void> {
  let config;
  try {
    config = parseConfig(process.env);
  } catch (err) {
    if (err instanceof ConfigError) {
      process.stderr.write(`${err.message}\n`);
      process.exit(2);
    }
    throw err;
  }
  const logger = createLogger(config);
  const started = Date.now();

  const server = await openDatabaseServer(databaseServerOptions(config, (message) => logger.info(message)));
  const database = createDatabase({
    databaseUrl: server.url,
    poolMax: config.database.poolMax,
    connectionTimeoutMs: config.database.connectTimeoutMs,
    queryTimeoutMs: config.database.queryTimeoutMs,
    onPoolError: (err) => logger.warn({ err: { message: err.message } }, 'database connection lost'),
    onQueryTimeout: (err) => logger.warn({ err: { message: err.message } }, 'database statement unanswered; connection closed'),
  });
  const app = await createApp({ config, database, logger });
  installShutdown({ app, database, server, logger, graceMs: config.shutdownGraceMs });

  await app.listen({ port: config.http.port, host: config.http.host });
  const shownHost = ['0.0.0.0', '::', '127.0.0.1'].includes(config.http.host) ? 'localhost' : config.http.host;
  const base = `http://${shownHost}:${config.http.port}`;
  logger.info(
    { data: server.description, migrationsApplied: server.migrations.applied, startupMs: Date.now() - started },
    `Calibration registry ready at ${base} (docs: ${base}/docs). Data: ${server.description}.`,
  );
}

main().catch((err: unknown) => {
  // One clear line for the operator; the stack only when asked for.
  process.stderr.write(`Could not start the calibration registry: ${(err as Error)?.message ?? String(err)}\n`);
  if (process.env.LOG_LEVEL === 'debug' || process.env.LOG_LEVEL === 'trace') process.stderr.write(`${(err as Error)?.stack}\n`);
  process.exit(1);
});
