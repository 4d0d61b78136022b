import { Inject, Injectable } from '@nestjs/common';
import { PrismaClient } from '@registry/data';
import { Pool } from 'pg';

import { Clock } from '../common/clock';
import { APP_CONFIG, type AppConfig } from '../config/config.schema';
import type { Actor, LabRole, RegistryRole, Scope } from './actor';
import { CredentialCache } from './credential-cache';
import { type HashBytes, type ParsedBearer, sameHash } from './tokens';

/** Writes of "last seen/used" are skipped when the stored value is younger than this. */
const TOUCH_EVERY_MS = 60_000;

/**
 * Other systems call the factor service thousands of times a day with a credential: its
 * lookup is one indexed query (service_credentials_key_id_key) straight through the pool,
 * a named statement planned once per connection, without the ORM's per-query overhead.
 */
const CREDENTIAL_BY_KEY_ID = {
  name: 'auth-credential-by-key-id',
  text: `SELECT id, name, secret_hash, scopes, all_labs, lab_ids, last_used_at, revoked_at
           FROM service_credentials WHERE key_id = $1`,
};

interface CredentialRow {
  id: string;
  name: string;
  secret_hash: Buffer;
  scopes: string[];
  all_labs: boolean;
  lab_ids: string[];
  last_used_at: Date | null;
  revoked_at: Date | null;
}

/**
 * Turns a bearer token into an actor, or null. Sessions end when revoked, at
 * their absolute expiry, after the idle timeout, or when the person is disabled.
 */
@Injectable()
export class Authenticator {
  constructor(
    private readonly prisma: PrismaClient,
    private readonly pool: Pool,
    private readonly clock: Clock,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
    private readonly cache: CredentialCache<CredentialRow | null>,
  ) {}

  /** When this process last wrote a credential's last use: concurrent requests must not all write it. */
  private readonly credentialTouchedAt = new Map<string, number>();

  async authenticate(bearer: NonNullable<ParsedBearer>): Promise<Actor | null> {
    return bearer.kind === 'session' ? this.session(bearer.hash) : this.credential(bearer.keyId, bearer.secretHash);
  }

  private async session(hash: HashBytes): Promise<Actor | null> {
    const now = this.clock.now();
    const session = await this.prisma.session.findUnique({
      where: { tokenHash: hash },
      include: { person: { include: { memberships: { select: { labId: true, labRole: true } } } } },
    });
    if (!session || session.revokedAt || session.expiresAt <= now) return null;
    if (now.getTime() - session.lastSeenAt.getTime() > this.config.auth.sessionIdleMs) return null;
    const person = session.person;
    if (person.status !== 'active') return null;
    if (now.getTime() - session.lastSeenAt.getTime() > TOUCH_EVERY_MS) {
      await this.prisma.session.update({ where: { id: session.id }, data: { lastSeenAt: now } });
    }
    return {
      kind: 'person',
      id: person.id,
      email: person.email,
      displayName: person.displayName,
      registryRole: person.registryRole as RegistryRole | null,
      labs: new Map(person.memberships.map((m) => [m.labId, m.labRole as LabRole])),
      sessionId: session.id,
      mustChangePassword: person.mustChangePassword,
    };
  }

  private async credential(keyId: string, secretHash: HashBytes): Promise<Actor | null> {
    const now = this.clock.now();
    const credential = await this.credentialRow(keyId, now.getTime());
    if (!credential || credential.revoked_at || !sameHash(credential.secret_hash, secretHash)) return null;
    const touched = Math.max(credential.last_used_at?.getTime() ?? -Infinity, this.credentialTouchedAt.get(credential.id) ?? -Infinity);
    if (now.getTime() - touched > TOUCH_EVERY_MS) {
      if (this.credentialTouchedAt.size > 10_000) this.credentialTouchedAt.clear();
      this.credentialTouchedAt.set(credential.id, now.getTime());
      await this.prisma.serviceCredential.update({ where: { id: credential.id }, data: { lastUsedAt: now } });
    }
    return {
      kind: 'credential',
      id: credential.id,
      name: credential.name,
      scopes: new Set(credential.scopes as Scope[]),
      labs: credential.all_labs ? 'all' : new Set(credential.lab_ids),
    };
  }

  /** The credential's row, from the cache while it is fresh (see CredentialCache), else from the database. */
  private async credentialRow(keyId: string, nowMs: number): Promise<CredentialRow | null> {
    const cached = this.cache.get(keyId, nowMs);
    if (cached !== undefined) return cached;
    const ticket = this.cache.ticket();
    const { rows } = await this.pool.query<CredentialRow>({ ...CREDENTIAL_BY_KEY_ID, values: [keyId] });
    const row = rows[0] ?? null;
    // Unknown keys are not remembered: a flood of made-up keys must not evict the real ones.
    if (row) this.cache.put(keyId, row, nowMs, ticket);
    return row;
  }
}
