import { Injectable } from '@nestjs/common';

import type { LabRole } from '../auth/actor';
import { type Db, uniqueOr409 } from '../common/db';

export interface Membership {
  readonly labId: string;
  readonly personId: string;
  readonly labRole: string;
  readonly externalRef: string | null;
  readonly createdAt: Date;
  readonly person: { readonly email: string; readonly displayName: string; readonly status: string };
}

export interface MembershipGrant {
  readonly role: LabRole;
  readonly externalRef: string | null;
}

const withPerson = { person: { select: { email: true, displayName: true, status: true } } } as const;
const EXTERNAL_REF_TAKEN = 'Another member of this lab already has that external reference.';

@Injectable()
export class MembershipsRepository {
  listForLab(db: Db, labId: string): Promise<Membership[]> {
    return db.labMembership.findMany({ where: { labId }, include: withPerson, orderBy: [{ person: { email: 'asc' } }] });
  }

  async personExists(db: Db, personId: string): Promise<boolean> {
    return (await db.person.count({ where: { id: personId } })) === 1;
  }

  find(db: Db, labId: string, personId: string): Promise<Membership | null> {
    return db.labMembership.findUnique({ where: { labId_personId: { labId, personId } }, include: withPerson });
  }

  create(db: Db, labId: string, personId: string, grant: MembershipGrant, now: Date): Promise<Membership> {
    return uniqueOr409(
      db.labMembership.create({
        data: { labId, personId, labRole: grant.role, externalRef: grant.externalRef, createdAt: now },
        include: withPerson,
      }),
      'lab_memberships_external_ref_key',
      'externalRef',
      EXTERNAL_REF_TAKEN,
    );
  }

  change(db: Db, labId: string, personId: string, grant: MembershipGrant): Promise<Membership> {
    return uniqueOr409(
      db.labMembership.update({
        where: { labId_personId: { labId, personId } },
        data: { labRole: grant.role, externalRef: grant.externalRef },
        include: withPerson,
      }),
      'lab_memberships_external_ref_key',
      'externalRef',
      EXTERNAL_REF_TAKEN,
    );
  }

  async remove(db: Db, labId: string, personId: string): Promise<boolean> {
    const result = await db.labMembership.deleteMany({ where: { labId, personId } });
    return result.count === 1;
  }
}
