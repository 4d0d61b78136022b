import { randomBytes } from 'node:crypto';

import { Client } from 'pg';

/** The role the service runs as: reads and writes data, appends to the audit trail, owns nothing. */
export const RUNTIME_ROLE = 'registry_app';

/**
 * Grants the runtime role what the service needs on every table (run after
 * each migration, so new tables are covered) and withholds changes to the
 * audit trail. Because the role owns no table, it cannot disable the
 * append-only triggers either. A no-op when the role does not exist.
 */
export async function grantRuntimeRole(ownerUrl: string): Promise<boolean> {
  const client = new Client({ connectionString: ownerUrl });
  await client.connect();
  try {
    const exists = await client.query('SELECT 1 FROM pg_roles WHERE rolname = $1', [RUNTIME_ROLE]);
    if (exists.rowCount === 0) return false;
    await client.query(`
      GRANT USAGE ON SCHEMA public TO ${RUNTIME_ROLE};
      GRANT SELECT, INSERT, UPDATE, DELETE ON ALL TABLES IN SCHEMA public TO ${RUNTIME_ROLE};
      GRANT USAGE, SELECT ON ALL SEQUENCES IN SCHEMA public TO ${RUNTIME_ROLE};
      REVOKE UPDATE, DELETE, TRUNCATE ON audit_entries FROM ${RUNTIME_ROLE};
      REVOKE INSERT, UPDATE, DELETE, TRUNCATE ON "_prisma_migrations" FROM ${RUNTIME_ROLE};`);
    return true;
  } finally {
    await client.end();
  }
}

/**
 * Creates (or resets the password of) the runtime login role on a server we
 * administer (the embedded one) and returns the URL to connect as it.
 */
export async function ensureRuntimeLogin(ownerUrl: string, password: string = randomBytes(24).toString('base64url')): Promise<string> {
  const client = new Client({ connectionString: ownerUrl });
  await client.connect();
  try {
    const exists = await client.query('SELECT 1 FROM pg_roles WHERE rolname = $1', [RUNTIME_ROLE]);
    const verb = exists.rowCount === 0 ? 'CREATE' : 'ALTER';
    // Identifiers and the literal are ours, not user input.
    await client.query(`${verb} ROLE ${RUNTIME_ROLE} LOGIN NOSUPERUSER NOCREATEDB NOCREATEROLE PASSWORD '${password}'`);
  } finally {
    await client.end();
  }
  const url = new URL(ownerUrl);
  url.username = RUNTIME_ROLE;
  url.password = password;
  return url.toString();
}
