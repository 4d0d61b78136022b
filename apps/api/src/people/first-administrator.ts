import type { PrismaClient } from '@registry/data';

import { AuditWriter } from '../audit/audit-writer';
import type { SystemContext } from '../auth/actor';
import { DomainError } from '../common/problem/domain-error';
import { type Person, PeopleRepository } from './people.repository';
import { PersonRegistration } from './person-registration';

export interface CreatedAdministrator {
  readonly person: Person;
  /** Shown once to whoever ran the command; only its hash is stored. */
  readonly initialPassword: string;
}

/**
 * Registers an administrator from the command line (`npm run admin:create`),
 * audited as the system. Refuses an email that is already registered.
 */
export async function createAdministrator(
  prisma: PrismaClient,
  who: { email: string; displayName: string },
  now: Date,
): Promise<CreatedAdministrator> {
  const people = new PeopleRepository();
  const registration = new PersonRegistration(people, new AuditWriter());
  if (await people.emailTaken(prisma, who.email)) {
    throw new DomainError('conflict', `Someone with email ${who.email} is already registered; nothing was changed.`);
  }
  const { initialPassword, passwordHash } = await registration.prepare();
  const ctx: SystemContext = { actor: { kind: 'system' }, requestId: null };
  const person = await prisma.$transaction((tx) =>
    registration.register(tx, ctx, { ...who, registryRole: 'administrator' }, passwordHash, now),
  );
  return { person, initialPassword };
}
