import { Injectable } from '@nestjs/common';
import { PrismaClient } from '@registry/data';

import { AuditWriter } from '../audit/audit-writer';
import type { Actor, LabRole, RequestContext } from '../auth/actor';
import { assertLabManager } from '../auth/access-policy';
import { Clock } from '../common/clock';
import { DomainError } from '../common/problem/domain-error';
import { LabsRepository } from './labs.repository';
import { type Membership, MembershipsRepository } from './memberships.repository';
import type { MembershipView, SetMembership } from './memberships.schemas';

const NO_MEMBERSHIP = 'That person is not a member of this lab.';

function present(m: Membership): MembershipView {
  return {
    labId: m.labId,
    personId: m.personId,
    role: m.labRole as LabRole,
    externalRef: m.externalRef,
    createdAt: m.createdAt.toISOString(),
    person: { email: m.person.email, displayName: m.person.displayName, status: m.person.status },
  };
}

const snapshot = (m: Membership) => ({ personId: m.personId, role: m.labRole, externalRef: m.externalRef });

/** Who is in a lab with which role. Administrators and the lab's managers change it; auditors read it. */
@Injectable()
export class MembershipsService {
  constructor(
    private readonly prisma: PrismaClient,
    private readonly labs: LabsRepository,
    private readonly memberships: MembershipsRepository,
    private readonly audit: AuditWriter,
    private readonly clock: Clock,
  ) {}

  async list(ctx: RequestContext, labId: string): Promise<{ items: MembershipView[] }> {
    if (!isAuditor(ctx.actor)) assertLabManager(ctx.actor, labId, 'lab');
    await this.existingLab(labId);
    return { items: (await this.memberships.listForLab(this.prisma, labId)).map(present) };
  }

  async set(ctx: RequestContext, labId: string, personId: string, body: SetMembership): Promise<MembershipView> {
    assertLabManager(ctx.actor, labId, 'lab');
    await this.existingLab(labId);
    const grant = { role: body.role, externalRef: body.externalRef ?? null };
    const result = await this.prisma.$transaction(async (tx) => {
      if (!(await this.memberships.personExists(tx, personId))) throw new DomainError('not-found', 'No person with that id.');
      const before = await this.memberships.find(tx, labId, personId);
      const after = before
        ? await this.memberships.change(tx, labId, personId, grant)
        : await this.memberships.create(tx, labId, personId, grant, this.clock.now());
      await this.audit.record(tx, ctx, {
        action: before ? 'update' : 'create',
        entityType: 'lab-membership',
        entityId: `${labId}/${personId}`,
        labId,
        oldValues: before ? snapshot(before) : null,
        newValues: snapshot(after),
      });
      return after;
    });
    return present(result);
  }

  async remove(ctx: RequestContext, labId: string, personId: string): Promise<void> {
    assertLabManager(ctx.actor, labId, 'lab');
    await this.prisma.$transaction(async (tx) => {
      const before = await this.memberships.find(tx, labId, personId);
      if (!before || !(await this.memberships.remove(tx, labId, personId))) throw new DomainError('not-found', NO_MEMBERSHIP);
      await this.audit.record(tx, ctx, {
        action: 'delete',
        entityType: 'lab-membership',
        entityId: `${labId}/${personId}`,
        labId,
        oldValues: snapshot(before),
      });
    });
  }

  private async existingLab(labId: string): Promise<void> {
    if (!(await this.labs.findById(this.prisma, labId))) throw new DomainError('not-found', 'No lab with that id.');
  }
}

function isAuditor(actor: Actor): boolean {
  return actor.kind === 'person' && actor.registryRole === 'auditor';
}
