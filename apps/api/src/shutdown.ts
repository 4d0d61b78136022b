import type { NestFastifyApplication } from '@nestjs/platform-fastify';
import type { Database, DatabaseServer } from '@registry/data';
import type { Logger } from 'pino';

export interface ShutdownTargets {
  readonly app: NestFastifyApplication;
  readonly database: Database;
  readonly server: DatabaseServer;
  readonly logger: Logger;
  readonly graceMs: number;
}

/**
 * SIGINT / SIGTERM: stop accepting, let in-flight requests finish (up to the
 * grace period), close the pool, stop the embedded database. A second signal
 * forces the exit.
 */
export function installShutdown({ app, database, server, logger, graceMs }: ShutdownTargets): void {
  let stopping = false;
  const stop = async (signal: NodeJS.Signals): Promise<void> => {
    if (stopping) {
      logger.warn(`${signal} again: exiting immediately`);
      process.exit(1);
    }
    stopping = true;
    logger.info(`${signal} received: draining requests and stopping`);
    const force = setTimeout(() => {
      logger.error(`Shutdown took longer than ${graceMs} ms; exiting`);
      process.exit(1);
    }, graceMs + 20_000);
    force.unref();
    try {
      await withDeadline(app.close(), graceMs);
      await database.close();
      await server.stop();
      logger.info('Stopped cleanly');
      logger.flush?.();
      process.exit(0);
    } catch (err) {
      logger.error({ err }, 'Error during shutdown');
      await server.stop().catch(() => undefined);
      process.exit(1);
    }
  };
  process.on('SIGINT', (s) => void stop(s));
  process.on('SIGTERM', (s) => void stop(s));
}

function withDeadline(promise: Promise<unknown>, ms: number): Promise<unknown> {
  return Promise.race([promise, new Promise((resolve) => setTimeout(resolve, ms).unref())]);
}
