import { Injectable } from '@nestjs/common';

import type { HashBytes } from '../auth/tokens';
import type { Db } from '../common/db';

export interface Credential {
  readonly id: string;
  readonly name: string;
  readonly keyId: string;
  readonly scopes: string[];
  readonly allLabs: boolean;
  readonly labIds: string[];
  readonly createdBy: string;
  readonly createdAt: Date;
  readonly lastUsedAt: Date | null;
  readonly revokedAt: Date | null;
  readonly replacesId: string | null;
  readonly version: number;
}

export interface NewCredential {
  readonly name: string;
  readonly keyId: string;
  readonly secretHash: HashBytes;
  readonly scopes: readonly string[];
  readonly labIds: readonly string[] | 'all';
  readonly createdBy: string;
  readonly replacesId: string | null;
}

/** Every column but the secret hash. */
const select = {
  id: true,
  name: true,
  keyId: true,
  scopes: true,
  allLabs: true,
  labIds: true,
  createdBy: true,
  createdAt: true,
  lastUsedAt: true,
  revokedAt: true,
  replacesId: true,
  version: true,
} as const;

@Injectable()
export class CredentialsRepository {
  issue(db: Db, c: NewCredential, now: Date): Promise<Credential> {
    return db.serviceCredential.create({
      data: {
        name: c.name,
        keyId: c.keyId,
        secretHash: c.secretHash,
        scopes: [...c.scopes],
        allLabs: c.labIds === 'all',
        labIds: c.labIds === 'all' ? [] : [...c.labIds],
        createdBy: c.createdBy,
        createdAt: now,
        replacesId: c.replacesId,
      },
      select,
    });
  }

  findById(db: Db, id: string): Promise<Credential | null> {
    return db.serviceCredential.findUnique({ where: { id }, select });
  }

  /** Newest first; `after` is the creation time and id of the last one seen. */
  list(db: Db, status: 'active' | 'revoked' | undefined, limit: number, after?: { createdAt: Date; id: string }): Promise<Credential[]> {
    return db.serviceCredential.findMany({
      where: {
        ...(status === 'active' ? { revokedAt: null } : status === 'revoked' ? { revokedAt: { not: null } } : {}),
        ...(after ? { OR: [{ createdAt: { lt: after.createdAt } }, { createdAt: after.createdAt, id: { lt: after.id } }] } : {}),
      },
      orderBy: [{ createdAt: 'desc' }, { id: 'desc' }],
      take: limit,
      select,
    });
  }

  /** Revokes the credential unless it already is; false when it was. */
  async revoke(db: Db, id: string, now: Date): Promise<boolean> {
    const result = await db.serviceCredential.updateMany({
      where: { id, revokedAt: null },
      data: { revokedAt: now, version: { increment: 1 } },
    });
    return result.count === 1;
  }
}
