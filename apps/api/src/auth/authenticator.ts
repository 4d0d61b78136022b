import { Inject, Injectable } from '@nestjs/common';
import { PrismaClient } from '@registry/data';

import { Clock } from '../common/clock';
import { APP_CONFIG, type AppConfig } from '../config/config.schema';
import type { Actor, LabRole, RegistryRole, Scope } from './actor';
import { type HashBytes, type ParsedBearer, sameHash } from './tokens';

/** Writes of "last seen/used" are skipped when the stored value is younger than this. */
const TOUCH_EVERY_MS = 60_000;

/**
 * Turns a bearer token into an actor, or null. Sessions end when revoked, at
 * their absolute expiry, after the idle timeout, or when the person is disabled.
 */
@Injectable()
export class Authenticator {
  constructor(
    private readonly prisma: PrismaClient,
    private readonly clock: Clock,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
  ) {}

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
    const credential = await this.prisma.serviceCredential.findUnique({ where: { keyId } });
    if (!credential || credential.revokedAt || !sameHash(credential.secretHash, secretHash)) return null;
    const now = this.clock.now();
    if (!credential.lastUsedAt || now.getTime() - credential.lastUsedAt.getTime() > TOUCH_EVERY_MS) {
      await this.prisma.serviceCredential.update({ where: { id: credential.id }, data: { lastUsedAt: now } });
    }
    return {
      kind: 'credential',
      id: credential.id,
      name: credential.name,
      scopes: new Set(credential.scopes as Scope[]),
      labs: credential.allLabs ? 'all' : new Set(credential.labIds),
    };
  }
}
