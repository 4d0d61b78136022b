import { Inject, Injectable } from '@nestjs/common';
import { PrismaClient } from '@registry/data';

import { AuditWriter } from '../audit/audit-writer';
import type { AuditContext, PersonActor, RegistryRole, RequestContext } from '../auth/actor';
import { newSessionToken } from '../auth/tokens';
import { Clock } from '../common/clock';
import { DomainError } from '../common/problem/domain-error';
import { APP_CONFIG, type AppConfig } from '../config/config.schema';
import type { Caller } from './caller.decorator';
import { hashPassword, needsRehash, verifyAgainstDummy, verifyPassword } from './password-hashing';
import type { SignedIn, SignIn } from './sessions.schemas';
import { type SignInCandidate, SignInRepository } from './sign-in.repository';
import { SignInThrottle } from './sign-in-throttle';

/** One answer for every refused sign-in, so it never tells whether the email exists. */
const REFUSED = 'The email or password is not right, or this account cannot sign in.';

type FailureReason = 'unknown-email' | 'no-password' | 'wrong-password' | 'disabled';

@Injectable()
export class SessionsService {
  constructor(
    private readonly prisma: PrismaClient,
    private readonly repository: SignInRepository,
    private readonly throttle: SignInThrottle,
    private readonly audit: AuditWriter,
    private readonly clock: Clock,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
  ) {}

  async signIn(body: SignIn, caller: Caller): Promise<SignedIn> {
    await this.throttle.reserve(body.email, caller.clientAddress);
    const person = await this.repository.findCandidateByEmail(this.prisma, body.email);
    const passwordOk = person?.passwordHash
      ? await verifyPassword(person.passwordHash, body.password)
      : await verifyAgainstDummy(body.password);
    const refusal: FailureReason | null = !person
      ? 'unknown-email'
      : !person.passwordHash
        ? 'no-password'
        : !passwordOk
          ? 'wrong-password'
          : person.status !== 'active'
            ? 'disabled'
            : null;
    if (refusal || !person) {
      await this.recordFailure(body.email, person, refusal ?? 'unknown-email', caller);
      throw new DomainError('unauthenticated', REFUSED);
    }
    const rehash = person.passwordHash && needsRehash(person.passwordHash) ? await hashPassword(body.password) : null;
    const { token, hash } = newSessionToken();
    const now = this.clock.now();
    const session = await this.prisma.$transaction(async (tx) => {
      await this.throttle.succeeded(tx, body.email);
      if (rehash) await this.repository.storePasswordHash(tx, person.id, rehash, now, false);
      const opened = await this.repository.openSession(tx, {
        personId: person.id,
        tokenHash: hash,
        now,
        expiresAt: new Date(now.getTime() + this.config.auth.sessionAbsoluteMs),
        clientAddress: caller.clientAddress,
        userAgent: caller.userAgent,
      });
      await this.audit.record(tx, personContext(person, opened.id, caller), {
        action: 'sign-in',
        entityType: 'session',
        entityId: opened.id,
        newValues: { personId: person.id, expiresAt: opened.expiresAt, clientAddress: caller.clientAddress, userAgent: caller.userAgent },
      });
      return opened;
    });
    return {
      token,
      expiresAt: session.expiresAt.toISOString(),
      person: {
        id: person.id,
        email: person.email,
        displayName: person.displayName,
        registryRole: person.registryRole as RegistryRole | null,
        mustChangePassword: person.mustChangePassword,
      },
    };
  }

  async signOut(ctx: RequestContext): Promise<void> {
    if (ctx.actor.kind !== 'person') throw new DomainError('forbidden', 'Only a signed-in person has a session to end.');
    const sessionId = ctx.actor.sessionId;
    await this.prisma.$transaction(async (tx) => {
      await this.repository.revokeSession(tx, sessionId, 'signed-out', this.clock.now());
      await this.audit.record(tx, ctx, { action: 'sign-out', entityType: 'session', entityId: sessionId });
    });
  }

  private async recordFailure(email: string, person: SignInCandidate | null, reason: FailureReason, caller: Caller): Promise<void> {
    const ctx: AuditContext = { actor: { kind: 'anonymous' }, requestId: caller.requestId };
    await this.prisma.$transaction(async (tx) => {
      await this.throttle.failed(tx);
      await this.audit.record(tx, ctx, {
        action: 'sign-in-failed',
        entityType: person ? 'person' : 'sign-in',
        entityId: person ? person.id : email,
        newValues: { email, reason, clientAddress: caller.clientAddress, userAgent: caller.userAgent },
      });
    });
  }
}

/** The audit actor for a sign-in: the person who just proved who they are. */
function personContext(person: SignInCandidate, sessionId: string, caller: Caller): RequestContext {
  const actor: PersonActor = {
    kind: 'person',
    id: person.id,
    email: person.email,
    displayName: person.displayName,
    registryRole: person.registryRole as RegistryRole | null,
    labs: new Map(),
    sessionId,
    mustChangePassword: person.mustChangePassword,
  };
  return { actor, requestId: caller.requestId, clientAddress: caller.clientAddress };
}
