import { Injectable } from '@nestjs/common';

import { type Db, uniqueOr409 } from '../common/db';

export interface Lab {
  readonly id: string;
  readonly code: string;
  readonly name: string;
  readonly timeZone: string;
  readonly fourEyesRequired: boolean;
  readonly balanceCheckWindowDays: number;
  readonly factorValidityDays: number;
  readonly allowTraceabilityExceptions: boolean;
  readonly quarantineOnFailedCalibration: boolean;
  readonly retiredAt: Date | null;
  readonly version: number;
  readonly createdAt: Date;
  readonly updatedAt: Date;
}

export type LabSettings = Pick<
  Lab,
  'balanceCheckWindowDays' | 'factorValidityDays' | 'allowTraceabilityExceptions' | 'quarantineOnFailedCalibration'
>;

export interface NewLab extends Partial<LabSettings> {
  readonly code: string;
  readonly name: string;
  readonly timeZone: string;
  readonly fourEyesRequired: boolean;
}

export type LabChanges = Partial<Pick<Lab, 'name' | 'timeZone' | 'fourEyesRequired'> & LabSettings>;

@Injectable()
export class LabsRepository {
  create(db: Db, lab: NewLab, now: Date): Promise<Lab> {
    return uniqueOr409(
      db.lab.create({ data: { ...lab, createdAt: now, updatedAt: now } }),
      'labs_code_key',
      'code',
      `A lab with code ${lab.code} already exists.`,
    );
  }

  findById(db: Db, id: string): Promise<Lab | null> {
    return db.lab.findUnique({ where: { id } });
  }

  /** Labs among `ids` that exist (to validate references). */
  async existingIds(db: Db, ids: readonly string[]): Promise<Set<string>> {
    const rows = await db.lab.findMany({ where: { id: { in: [...ids] } }, select: { id: true } });
    return new Set(rows.map((r) => r.id));
  }

  /** A page of labs ordered by code, limited to `readable`; `after` is the last code and id seen. */
  listReadable(db: Db, readable: 'all' | string[], limit: number, after?: { code: string; id: string }): Promise<Lab[]> {
    return db.lab.findMany({
      where: {
        ...(readable === 'all' ? {} : { id: { in: readable } }),
        ...(after ? { OR: [{ code: { gt: after.code } }, { code: after.code, id: { gt: after.id } }] } : {}),
      },
      orderBy: [{ code: 'asc' }, { id: 'asc' }],
      take: limit,
    });
  }

  /** Applies the changes when the stored version is still `version`; false when someone else changed it. */
  async updateIfVersion(db: Db, id: string, version: number, changes: LabChanges, now: Date): Promise<boolean> {
    const result = await db.lab.updateMany({
      where: { id, version },
      data: { ...changes, updatedAt: now, version: { increment: 1 } },
    });
    return result.count === 1;
  }
}
