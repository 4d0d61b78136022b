import 'reflect-metadata';

import { parseArgs } from 'node:util';

import { createDatabase, openDatabaseServer } from '@registry/data';

import { SystemClock } from '../apps/api/src/common/clock';
import { DomainError } from '../apps/api/src/common/problem/domain-error';
import { ConfigError, parseConfig } from '../apps/api/src/config/config.schema';
import { createAdministrator } from '../apps/api/src/people/first-administrator';
import { createPersonSchema } from '../apps/api/src/people/people.schemas';
import { databaseServerOptions } from '../apps/api/src/config/database-server-options';

const USAGE = 'Usage: npm run admin:create -- --email <email> --name "<display name>"';

/**
 * `npm run admin:create`: registers an administrator (the first one, or a new
 * one when every administrator is locked out) and prints a one-time password.
 * Starts the embedded server unless DATABASE_URL is set, and migrates first.
 */
async function main(): Promise<void> {
  const input = argumentsOf(process.argv.slice(2));
  if (typeof input === 'string') {
    console.error(`${input}\n${USAGE}`);
    process.exit(2);
  }
  const config = parseConfig(process.env);
  const server = await openDatabaseServer(databaseServerOptions(config, (m) => console.error(m)));
  const database = createDatabase({ databaseUrl: server.url, poolMax: 2 });
  try {
    const { person, initialPassword } = await createAdministrator(database.prisma, input, new SystemClock().now());
    console.log(`Administrator ${person.displayName} <${person.email}> created (id ${person.id}).`);
    console.log('One-time password, shown only now; it must be changed after the first sign-in (POST /v1/me/password):');
    console.log(`  ${initialPassword}`);
  } finally {
    await database.close();
    await server.stop();
  }
}

/** The email and name, or what is wrong with the arguments. */
function argumentsOf(args: string[]): { email: string; displayName: string } | string {
  try {
    const { values } = parseArgs({ args, options: { email: { type: 'string' }, name: { type: 'string' } }, strict: true });
    const parsed = createPersonSchema.pick({ email: true, displayName: true }).safeParse({ email: values.email, displayName: values.name });
    if (parsed.success) return parsed.data;
    return parsed.error.issues.map((i) => `--${i.path[0] === 'displayName' ? 'name' : 'email'}: ${i.message}`).join('\n');
  } catch (err) {
    return (err as Error).message;
  }
}

main().catch((err: unknown) => {
  if (err instanceof ConfigError || err instanceof DomainError) console.error(err.message);
  else console.error(`Could not create the administrator: ${(err as Error).message}`);
  process.exit(1);
});
