import { Injectable } from '@nestjs/common';

import { AuditWriter } from '../audit/audit-writer';
import type { AuditContext } from '../auth/actor';
import type { Db } from '../common/db';
import { hashPassword, newInitialPassword } from '../sessions/password-hashing';
import { type Person, PeopleRepository } from './people.repository';
import { personSnapshot } from './person.presenter';

export interface Registration {
  readonly email: string;
  readonly displayName: string;
  readonly registryRole: 'administrator' | 'auditor' | null;
}

/**
 * Registers a person with a random one-time password (returned once, stored
 * only as its argon2id hash) and records it in the audit trail. Used by the
 * API and by the first-administrator command.
 */
@Injectable()
export class PersonRegistration {
  constructor(
    private readonly people: PeopleRepository,
    private readonly audit: AuditWriter,
  ) {}

  async prepare(): Promise<{ initialPassword: string; passwordHash: string }> {
    const initialPassword = newInitialPassword();
    return { initialPassword, passwordHash: await hashPassword(initialPassword) };
  }

  /** Inside the caller's transaction; `passwordHash` from prepare() (hashing stays outside the transaction). */
  async register(tx: Db, ctx: AuditContext, r: Registration, passwordHash: string, now: Date): Promise<Person> {
    const person = await this.people.create(tx, { ...r, passwordHash }, now);
    await this.audit.record(tx, ctx, {
      action: 'create',
      entityType: 'person',
      entityId: person.id,
      newValues: { ...personSnapshot(person), mustChangePassword: true },
    });
    return person;
  }
}
