import { Injectable } from '@nestjs/common';
import { PrismaClient } from '@registry/data';

import { AuditWriter } from '../audit/audit-writer';
import type { Actor, RequestContext } from '../auth/actor';
import { assertAdministrator } from '../auth/access-policy';
import { Clock } from '../common/clock';
import { expectedVersion, staleVersion } from '../common/http/concurrency';
import { decodeCursor, encodeCursor, type Page, toPage } from '../common/pagination';
import { DomainError } from '../common/problem/domain-error';
import { SignInRepository } from '../sessions/sign-in.repository';
import { type PeopleScope, type Person, PeopleRepository } from './people.repository';
import type { CreatedPersonView, CreatePerson, PersonListQuery, PersonView, UpdatePerson } from './people.schemas';
import { personSnapshot, presentPerson } from './person.presenter';
import { PersonRegistration } from './person-registration';

const NOT_FOUND = 'No person with that id.';

/** Administrators and auditors see everyone; managers the members of their labs; everyone else only themselves. */
function scopeOf(actor: Actor): PeopleScope {
  if (actor.kind !== 'person') throw new DomainError('forbidden', 'Service credentials cannot read people.');
  if (actor.registryRole) return 'all';
  const managed = [...actor.labs].filter(([, role]) => role === 'manager').map(([labId]) => labId);
  return { selfId: actor.id, labIds: managed };
}

function visible(scope: PeopleScope, person: Person): boolean {
  return scope === 'all' || person.id === scope.selfId || person.memberships.some((m) => scope.labIds.includes(m.labId));
}

@Injectable()
export class PeopleService {
  constructor(
    private readonly prisma: PrismaClient,
    private readonly people: PeopleRepository,
    private readonly registration: PersonRegistration,
    private readonly sessions: SignInRepository,
    private readonly audit: AuditWriter,
    private readonly clock: Clock,
  ) {}

  async create(ctx: RequestContext, body: CreatePerson): Promise<CreatedPersonView> {
    assertAdministrator(ctx.actor);
    const { initialPassword, passwordHash } = await this.registration.prepare();
    const person = await this.prisma.$transaction((tx) =>
      this.registration.register(tx, ctx, { ...body, registryRole: body.registryRole ?? null }, passwordHash, this.clock.now()),
    );
    return { ...presentPerson(person), initialPassword };
  }

  async list(ctx: RequestContext, query: PersonListQuery): Promise<Page<PersonView>> {
    const after = query.cursor ? decodeCursor(query.cursor) : undefined;
    const rows = await this.people.list(
      this.prisma,
      scopeOf(ctx.actor),
      { ...(query.status ? { status: query.status } : {}), ...(query.labId ? { labId: query.labId } : {}) },
      query.limit + 1,
      after ? { email: String(after.sortValue), id: after.id } : undefined,
    );
    const page = toPage(rows, query.limit, (p) => encodeCursor(p.email, p.id));
    return { items: page.items.map(presentPerson), nextCursor: page.nextCursor };
  }

  async get(ctx: RequestContext, personId: string): Promise<PersonView> {
    return presentPerson(await this.visiblePerson(ctx, personId));
  }

  async update(ctx: RequestContext, personId: string, changes: UpdatePerson, ifMatch: string | undefined): Promise<PersonView> {
    const before = await this.visiblePerson(ctx, personId);
    assertAdministrator(ctx.actor);
    const version = expectedVersion(ifMatch);
    if (version !== before.version) throw staleVersion(before.version);
    const disabling = changes.status === 'disabled' && before.status !== 'disabled';
    const losesAdministrator =
      before.registryRole === 'administrator' &&
      before.status === 'active' &&
      (disabling || (changes.registryRole !== undefined && changes.registryRole !== 'administrator'));
    const now = this.clock.now();
    const after = await this.prisma.$transaction(async (tx) => {
      if (losesAdministrator && (await this.people.otherActiveAdministrators(tx, personId)) === 0) {
        throw new DomainError('conflict', 'This is the last active administrator: make someone else an administrator first.', [
          { field: changes.status ? 'status' : 'registryRole', reason: 'would leave the registry without an active administrator' },
        ]);
      }
      if (!(await this.people.updateIfVersion(tx, personId, version, changes, now))) throw staleVersion();
      const sessionsEnded = disabling ? await this.sessions.revokeSessionsOf(tx, personId, 'person-disabled', now) : 0;
      const updated = await this.people.findById(tx, personId);
      if (!updated) throw new DomainError('not-found', NOT_FOUND);
      await this.audit.record(tx, ctx, {
        action: 'update',
        entityType: 'person',
        entityId: personId,
        oldValues: personSnapshot(before),
        newValues: { ...personSnapshot(updated), ...(disabling ? { sessionsEnded } : {}) },
      });
      return updated;
    });
    return presentPerson(after);
  }

  private async visiblePerson(ctx: RequestContext, personId: string): Promise<Person> {
    const person = await this.people.findById(this.prisma, personId);
    if (!person || !visible(scopeOf(ctx.actor), person)) throw new DomainError('not-found', NOT_FOUND);
    return person;
  }
}
