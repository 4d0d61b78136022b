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

/**
 * A session with its person and lab roles in one round trip (the ORM's include took three):
 * every request a person makes starts here.
 */
const SESSION_BY_TOKEN = {
  name: 'auth-session-by-token',
  text: `SELECT s.id, s.expires_at, s.revoked_at, s.last_seen_at,
                p.id AS person_id, p.email, p.display_name, p.status, p.registry_role, p.must_change_password,
                coalesce((SELECT json_agg(json_build_array(m.lab_id, m.lab_role)) FROM lab_memberships m WHERE m.person_id = p.id),
                         '[]'::json) AS memberships
           FROM sessions s JOIN people p ON p.id = s.person_id
          WHERE s.token_hash = $1`,
};

interface SessionRow {
  id: string;
  expires_at: Date;
  revoked_at: Date | null;
  last_seen_at: Date;
  person_id: string;
  email: string;
  display_name: string;
  status: string;
  registry_role: string | null;
  must_change_password: boolean;
  memberships: [string, string][];
}

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
    const { rows } = await this.pool.query<SessionRow>({ ...SESSION_BY_TOKEN, values: [Buffer.from(hash)] });
    const session = rows[0];
    if (!session || session.revoked_at || session.expires_at <= now) return null;
    if (now.getTime() - session.last_seen_at.getTime() > this.config.auth.sessionIdleMs) return null;
    if (session.status !== 'active') return null;
    if (now.getTime() - session.last_seen_at.getTime() > TOUCH_EVERY_MS) {
      await this.prisma.session.update({ where: { id: session.id }, data: { lastSeenAt: now } });
    }
    return {
      kind: 'person',
      id: session.person_id,
      email: session.email,
      displayName: session.display_name,
      registryRole: session.registry_role as RegistryRole | null,
      labs: new Map(session.memberships.map(([labId, role]) => [labId, role as LabRole])),
      sessionId: session.id,
      mustChangePassword: session.must_change_password,
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
