import { Injectable } from '@nestjs/common';

import { type Db, uniqueOr409 } from '../common/db';

export interface Person {
  readonly id: string;
  readonly email: string;
  readonly displayName: string;
  readonly registryRole: string | null;
  readonly status: string;
  readonly mustChangePassword: boolean;
  readonly passwordSetAt: Date | null;
  readonly version: number;
  readonly createdAt: Date;
  readonly updatedAt: Date;
  readonly memberships: readonly { labId: string; labRole: string; externalRef: string | null }[];
}

export interface NewPerson {
  readonly email: string;
  readonly displayName: string;
  readonly registryRole: string | null;
  readonly passwordHash: string;
}

export type PersonChanges = Partial<{ displayName: string; registryRole: string | null; status: string }>;

/** Who may be listed: everyone, or oneself plus the members of some labs. */
export type PeopleScope = 'all' | { readonly selfId: string; readonly labIds: readonly string[] };

/** Serialises changes that could remove the last active administrator. */
const ADMINISTRATORS_LOCK = 72707372;

const select = {
  id: true,
  email: true,
  displayName: true,
  registryRole: true,
  status: true,
  mustChangePassword: true,
  passwordSetAt: true,
  version: true,
  createdAt: true,
  updatedAt: true,
  memberships: { select: { labId: true, labRole: true, externalRef: true }, orderBy: { labId: 'asc' } },
} as const;

@Injectable()
export class PeopleRepository {
  /** A new person with a one-time password they must change. */
  create(db: Db, p: NewPerson, now: Date): Promise<Person> {
    return uniqueOr409(
      db.person.create({ data: { ...p, mustChangePassword: true, createdAt: now, updatedAt: now }, select }),
      'people_email_key',
      'email',
      `Someone with email ${p.email} is already registered.`,
    );
  }

  async emailTaken(db: Db, email: string): Promise<boolean> {
    return (await db.person.count({ where: { email } })) > 0;
  }

  findById(db: Db, id: string): Promise<Person | null> {
    return db.person.findUnique({ where: { id }, select });
  }

  /** A page ordered by email; `after` is the last email and id seen. */
  list(db: Db, scope: PeopleScope, filter: { status?: string; labId?: string }, limit: number, after?: { email: string; id: string }) {
    return db.person.findMany({
      where: {
        AND: [
          scope === 'all' ? {} : { OR: [{ id: scope.selfId }, { memberships: { some: { labId: { in: [...scope.labIds] } } } }] },
          filter.status ? { status: filter.status } : {},
          filter.labId ? { memberships: { some: { labId: filter.labId } } } : {},
          after ? { OR: [{ email: { gt: after.email } }, { email: after.email, id: { gt: after.id } }] } : {},
        ],
      },
      orderBy: [{ email: 'asc' }, { id: 'asc' }],
      take: limit,
      select,
    });
  }

  async updateIfVersion(db: Db, id: string, version: number, changes: PersonChanges, now: Date): Promise<boolean> {
    const result = await db.person.updateMany({ where: { id, version }, data: { ...changes, updatedAt: now, version: { increment: 1 } } });
    return result.count === 1;
  }

  /** Takes the administrators lock for the rest of the transaction, then counts the other active administrators. */
  async otherActiveAdministrators(db: Db, exceptId: string): Promise<number> {
    await db.$queryRaw`SELECT 1 FROM pg_advisory_xact_lock(${ADMINISTRATORS_LOCK}::bigint)`;
    return db.person.count({ where: { registryRole: 'administrator', status: 'active', id: { not: exceptId } } });
  }
}
