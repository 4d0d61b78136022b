import { Injectable } from '@nestjs/common';
import { PrismaClient } from '@registry/data';

import { AuditWriter } from '../audit/audit-writer';
import type { Actor, RequestContext, Scope } from '../auth/actor';
import { assertAdministrator } from '../auth/access-policy';
import { newCredentialKey } from '../auth/tokens';
import { CredentialCache } from '../auth/credential-cache';
import { Clock } from '../common/clock';
import { cursorInstant, decodeCursor, encodeCursor, type Page, toPage } from '../common/pagination';
import { DomainError } from '../common/problem/domain-error';
import type { Db } from '../common/db';
import { LabsRepository } from '../labs/labs.repository';
import type { CreateCredential, CredentialListQuery, CredentialView, IssuedCredentialView } from './credentials.schemas';
import { type Credential, CredentialsRepository } from './credentials.repository';

function present(c: Credential): CredentialView {
  return {
    id: c.id,
    name: c.name,
    keyId: c.keyId,
    scopes: c.scopes as Scope[],
    labIds: c.allLabs ? 'all' : c.labIds,
    status: c.revokedAt ? 'revoked' : 'active',
    createdBy: c.createdBy,
    createdAt: c.createdAt.toISOString(),
    lastUsedAt: c.lastUsedAt?.toISOString() ?? null,
    revokedAt: c.revokedAt?.toISOString() ?? null,
    replacesId: c.replacesId,
    version: c.version,
  };
}

/** What the audit trail keeps: never the key or its hash. */
const snapshot = (c: Credential) => ({
  name: c.name,
  keyId: c.keyId,
  scopes: c.scopes,
  labIds: c.allLabs ? 'all' : c.labIds,
  replacesId: c.replacesId,
});

function assertMayRead(actor: Actor): void {
  if (actor.kind === 'person' && actor.registryRole) return;
  throw new DomainError('forbidden', 'Only administrators and auditors may see service credentials.');
}

const NOT_FOUND = 'No service credential with that id.';

/** Keys for other systems: issued, rotated and revoked by administrators; the key is shown only once. */
@Injectable()
export class CredentialsService {
  constructor(
    private readonly prisma: PrismaClient,
    private readonly credentials: CredentialsRepository,
    private readonly labs: LabsRepository,
    private readonly audit: AuditWriter,
    private readonly clock: Clock,
    private readonly cache: CredentialCache,
  ) {}

  async create(ctx: RequestContext, body: CreateCredential): Promise<IssuedCredentialView> {
    assertAdministrator(ctx.actor);
    if (body.labIds !== 'all') {
      const known = await this.labs.existingIds(this.prisma, body.labIds);
      const unknown = body.labIds.filter((id) => !known.has(id));
      if (unknown.length) {
        throw new DomainError('validation-failed', 'Some labs do not exist.', [
          { field: 'labIds', reason: `unknown lab ${unknown.join(', ')}` },
        ]);
      }
    }
    return this.prisma.$transaction((tx) => this.issue(tx, ctx, { name: body.name, scopes: body.scopes, labIds: body.labIds }, null));
  }

  async list(ctx: RequestContext, query: CredentialListQuery): Promise<Page<CredentialView>> {
    assertMayRead(ctx.actor);
    const after = query.cursor ? decodeCursor(query.cursor) : undefined;
    const afterAt = after ? cursorInstant(after.sortValue) : undefined;
    const rows = await this.credentials.list(
      this.prisma,
      query.status,
      query.limit + 1,
      after && afterAt ? { createdAt: afterAt, id: after.id } : undefined,
    );
    const page = toPage(rows, query.limit, (c) => encodeCursor(c.createdAt.toISOString(), c.id));
    return { items: page.items.map(present), nextCursor: page.nextCursor };
  }

  async get(ctx: RequestContext, id: string): Promise<CredentialView> {
    assertMayRead(ctx.actor);
    return present(await this.existing(this.prisma, id));
  }

  /** A new key with the same name, scopes and labs; the old one stops working in the same transaction. */
  async rotate(ctx: RequestContext, id: string): Promise<IssuedCredentialView> {
    assertAdministrator(ctx.actor);
    const now = this.clock.now();
    const issued = await this.prisma.$transaction(async (tx) => {
      const old = await this.existing(tx, id);
      if (!(await this.credentials.revoke(tx, id, now))) {
        throw new DomainError('conflict', 'This credential is revoked; issue a new one instead of rotating it.');
      }
      const issued = await this.issue(tx, ctx, { name: old.name, scopes: old.scopes, labIds: old.allLabs ? 'all' : old.labIds }, old.id);
      await this.audit.record(tx, ctx, {
        action: 'rotate',
        entityType: 'service-credential',
        entityId: old.id,
        oldValues: { revokedAt: null },
        newValues: { revokedAt: now, replacedById: issued.id },
      });
      return { issued, keyId: old.keyId };
    });
    // The database also announces it to every instance; this one need not wait for that.
    this.cache.forget(issued.keyId);
    return issued.issued;
  }

  /** Stops the credential at once. Revoking a revoked credential changes nothing. */
  async revoke(ctx: RequestContext, id: string): Promise<CredentialView> {
    assertAdministrator(ctx.actor);
    const now = this.clock.now();
    const credential = await this.prisma.$transaction(async (tx) => {
      const before = await this.existing(tx, id);
      if (await this.credentials.revoke(tx, id, now)) {
        await this.audit.record(tx, ctx, {
          action: 'revoke',
          entityType: 'service-credential',
          entityId: id,
          oldValues: { revokedAt: null },
          newValues: { revokedAt: now },
        });
      }
      return (await this.credentials.findById(tx, id)) ?? before;
    });
    this.cache.forget(credential.keyId);
    return present(credential);
  }

  private async issue(
    tx: Db,
    ctx: RequestContext,
    what: { name: string; scopes: readonly string[]; labIds: readonly string[] | 'all' },
    replacesId: string | null,
  ): Promise<IssuedCredentialView> {
    const { key, keyId, secretHash } = newCredentialKey();
    const created = await this.credentials.issue(tx, { ...what, keyId, secretHash, createdBy: ctx.actor.id, replacesId }, this.clock.now());
    await this.audit.record(tx, ctx, {
      action: 'create',
      entityType: 'service-credential',
      entityId: created.id,
      newValues: snapshot(created),
    });
    return { ...present(created), key };
  }

  private async existing(db: Db, id: string): Promise<Credential> {
    const credential = await this.credentials.findById(db, id);
    if (!credential) throw new DomainError('not-found', NOT_FOUND);
    return credential;
  }
}
