import { Injectable } from '@nestjs/common';

import type { HashBytes } from '../auth/tokens';
import type { Db } from '../common/db';

/** What sign-in needs to know about a person. */
export interface SignInCandidate {
  readonly id: string;
  readonly email: string;
  readonly displayName: string;
  readonly registryRole: string | null;
  readonly status: string;
  readonly passwordHash: string | null;
  readonly mustChangePassword: boolean;
}

export interface NewSession {
  readonly personId: string;
  readonly tokenHash: HashBytes;
  readonly now: Date;
  readonly expiresAt: Date;
  readonly clientAddress: string | null;
  readonly userAgent: string | null;
}

const candidateFields = {
  id: true,
  email: true,
  displayName: true,
  registryRole: true,
  status: true,
  passwordHash: true,
  mustChangePassword: true,
} as const;

/** Sessions and the password hashes they are opened with. */
@Injectable()
export class SignInRepository {
  findCandidateByEmail(db: Db, email: string): Promise<SignInCandidate | null> {
    return db.person.findUnique({ where: { email }, select: candidateFields });
  }

  findCandidateById(db: Db, id: string): Promise<SignInCandidate | null> {
    return db.person.findUnique({ where: { id }, select: candidateFields });
  }

  async openSession(db: Db, s: NewSession): Promise<{ id: string; expiresAt: Date }> {
    return db.session.create({
      data: {
        personId: s.personId,
        tokenHash: s.tokenHash,
        createdAt: s.now,
        lastSeenAt: s.now,
        expiresAt: s.expiresAt,
        clientAddress: s.clientAddress,
        userAgent: s.userAgent,
      },
      select: { id: true, expiresAt: true },
    });
  }

  async revokeSession(db: Db, sessionId: string, reason: string, now: Date): Promise<boolean> {
    const result = await db.session.updateMany({
      where: { id: sessionId, revokedAt: null },
      data: { revokedAt: now, revokedReason: reason },
    });
    return result.count === 1;
  }

  /** Ends every open session of the person (but `keep`); returns how many. */
  async revokeSessionsOf(db: Db, personId: string, reason: string, now: Date, keep?: string): Promise<number> {
    const result = await db.session.updateMany({
      where: { personId, revokedAt: null, ...(keep ? { id: { not: keep } } : {}) },
      data: { revokedAt: now, revokedReason: reason },
    });
    return result.count;
  }

  /** Stores a new hash; `chosen` = the person set it (clears must-change); bumps the version. */
  async storePasswordHash(db: Db, personId: string, passwordHash: string, now: Date, chosen: boolean): Promise<void> {
    await db.person.update({
      where: { id: personId },
      data: {
        passwordHash,
        ...(chosen ? { passwordSetAt: now, mustChangePassword: false, version: { increment: 1 }, updatedAt: now } : {}),
      },
    });
  }
}
