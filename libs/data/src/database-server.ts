import { join } from 'node:path';

import { type EmbeddedServer, startEmbeddedPostgres } from './embedded/embedded-postgres';
import { migrate, type MigrationReport } from './migrations/migration-runner';
import { ensureRuntimeLogin, grantRuntimeRole } from './runtime-role';

export interface DatabaseServerOptions {
  /** An external server; when absent an embedded one is started in `dataDir`. */
  readonly url?: string;
  /** Owner connection for migrations on an external server; defaults to `url`. */
  readonly migrationUrl?: string;
  readonly dataDir: string;
  readonly embeddedPort?: number;
  readonly database?: string;
  readonly log?: (message: string) => void;
}

/** A migrated database, embedded or external, ready for the service. */
export interface DatabaseServer {
  /** The service's connection: the unprivileged runtime role where one is set up. */
  readonly url: string;
  /** The owner's connection (migrations, maintenance). */
  readonly ownerUrl: string;
  readonly embedded: EmbeddedServer | null;
  /** Where the data lives, for the start-up log (never the password). */
  readonly description: string;
  readonly migrations: MigrationReport;
  stop(): Promise<void>;
}

/** The folder of SQL migrations, found from the repository root (works from src and dist). */
export function migrationsDir(fromDir: string = __dirname): string {
  const marker = `${join('libs', 'data')}`;
  const index = fromDir.lastIndexOf(marker);
  const root = index >= 0 ? fromDir.slice(0, index).replace(/[\\/]dist[\\/]?$/, '') : process.cwd();
  return join(root, 'prisma', 'migrations');
}

export async function openDatabaseServer(options: DatabaseServerOptions): Promise<DatabaseServer> {
  const log = options.log ?? (() => undefined);
  let embedded: EmbeddedServer | null = null;
  let url = options.url;
  if (!url) {
    embedded = await startEmbeddedPostgres({
      dataDir: options.dataDir,
      database: options.database ?? 'registry',
      ...(options.embeddedPort !== undefined ? { port: options.embeddedPort } : {}),
      log,
    });
    url = embedded.url;
  }
  const ownerUrl = options.migrationUrl ?? url;
  try {
    const migrations = await migrate(ownerUrl, migrationsDir(), log);
    // On our own server the service never connects as the owner: create its role first, then grant.
    const serviceUrl = embedded ? await ensureRuntimeLogin(ownerUrl) : url;
    await grantRuntimeRole(ownerUrl);
    return {
      url: serviceUrl,
      ownerUrl,
      embedded,
      description: embedded
        ? `embedded PostgreSQL in ${embedded.clusterDir} (127.0.0.1:${embedded.port})`
        : `external PostgreSQL at ${redact(url)}`,
      migrations,
      stop: async () => embedded?.stop(),
    };
  } catch (err) {
    await embedded?.stop();
    throw err;
  }
}

/** The URL without its password, for logs. */
export function redact(url: string): string {
  try {
    const u = new URL(url);
    if (u.password) u.password = '***';
    return u.toString();
  } catch {
    return '(unparseable URL)';
  }
}
