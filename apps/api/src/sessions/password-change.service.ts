import { Injectable } from '@nestjs/common';
import { PrismaClient } from '@registry/data';

import { AuditWriter } from '../audit/audit-writer';
import type { RequestContext } from '../auth/actor';
import { Clock } from '../common/clock';
import { DomainError } from '../common/problem/domain-error';
import { hashPassword, verifyPassword } from './password-hashing';
import { passwordProblem } from './password-policy';
import type { ChangePassword } from './sessions.schemas';
import { SignInRepository } from './sign-in.repository';
import { SignInThrottle } from './sign-in-throttle';

const refuse = (field: string, reason: string) => new DomainError('validation-failed', `${field} ${reason}.`, [{ field, reason }]);

/**
 * A signed-in person replaces their password. Guesses at the current one count
 * as sign-in failures; success ends the person's other sessions.
 */
@Injectable()
export class PasswordChangeService {
  constructor(
    private readonly prisma: PrismaClient,
    private readonly repository: SignInRepository,
    private readonly throttle: SignInThrottle,
    private readonly audit: AuditWriter,
    private readonly clock: Clock,
  ) {}

  async change(ctx: RequestContext, body: ChangePassword): Promise<void> {
    if (ctx.actor.kind !== 'person') throw new DomainError('forbidden', 'Only people have passwords.');
    const actor = ctx.actor;
    const person = await this.repository.findCandidateById(this.prisma, actor.id);
    if (!person) throw new DomainError('not-found', 'No such person.');
    const problem = passwordProblem(body.newPassword, person.email);
    if (problem) throw refuse('newPassword', problem);
    if (body.newPassword === body.currentPassword) throw refuse('newPassword', 'must differ from the current password');

    await this.throttle.reserve(person.email, ctx.clientAddress);
    if (!person.passwordHash || !(await verifyPassword(person.passwordHash, body.currentPassword))) {
      await this.prisma.$transaction((tx) => this.throttle.failed(tx));
      throw refuse('currentPassword', 'is not your current password');
    }
    const newHash = await hashPassword(body.newPassword);
    const now = this.clock.now();
    await this.prisma.$transaction(async (tx) => {
      await this.throttle.succeeded(tx, person.email);
      await this.repository.storePasswordHash(tx, person.id, newHash, now, true);
      const ended = await this.repository.revokeSessionsOf(tx, person.id, 'password-changed', now, actor.sessionId);
      await this.audit.record(tx, ctx, {
        action: 'password-change',
        entityType: 'person',
        entityId: person.id,
        oldValues: { mustChangePassword: person.mustChangePassword },
        newValues: { mustChangePassword: false, passwordSetAt: now, otherSessionsEnded: ended },
      });
    });
  }
}
