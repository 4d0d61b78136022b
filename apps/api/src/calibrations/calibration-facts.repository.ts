import { Injectable } from '@nestjs/common';

import type { LabRole } from '../auth/actor';
import type { Tx } from '../inventory/inventory-workflow';

/** The lab settings a calibration's rules read. */
export interface LabPolicy {
  readonly id: string;
  readonly timeZone: string;
  readonly retired: boolean;
  readonly fourEyesRequired: boolean;
  readonly balanceCheckWindowDays: number;
  readonly factorValidityDays: number;
  readonly allowTraceabilityExceptions: boolean;
  readonly quarantineOnFailedCalibration: boolean;
}

export interface BalanceCheckFact {
  readonly id: string;
  readonly performedAt: Date;
  readonly kind: string;
  readonly passed: boolean;
}

/** Read-only facts about labs, people and balance checks, by intent. */
@Injectable()
export class CalibrationFactsRepository {
  async labPolicy(tx: Tx, labId: string): Promise<LabPolicy | null> {
    const lab = await tx.lab.findUnique({ where: { id: labId } });
    if (!lab) return null;
    return {
      id: lab.id,
      timeZone: lab.timeZone,
      retired: lab.retiredAt !== null,
      fourEyesRequired: lab.fourEyesRequired,
      balanceCheckWindowDays: lab.balanceCheckWindowDays,
      factorValidityDays: lab.factorValidityDays,
      allowTraceabilityExceptions: lab.allowTraceabilityExceptions,
      quarantineOnFailedCalibration: lab.quarantineOnFailedCalibration,
    };
  }

  /** The policy of a lab that must exist (a calibration's own lab). */
  async policyOf(tx: Tx, labId: string): Promise<LabPolicy> {
    const policy = await this.labPolicy(tx, labId);
    if (!policy) throw new Error(`lab ${labId} is missing`);
    return policy;
  }

  /** The person's role in the lab, when the person is active and a member; null otherwise. */
  async activeMemberRole(tx: Tx, labId: string, personId: string): Promise<LabRole | null> {
    const m = await tx.labMembership.findUnique({
      where: { labId_personId: { labId, personId } },
      select: { labRole: true, person: { select: { status: true } } },
    });
    return m && m.person.status === 'active' ? (m.labRole as LabRole) : null;
  }

  /** The balance's latest routine check made at or before `at`, whatever its kind. */
  async latestBalanceCheck(tx: Tx, balanceId: string, at: Date): Promise<BalanceCheckFact | null> {
    return tx.balanceCheck.findFirst({
      where: { balanceId, performedAt: { lte: at } },
      orderBy: [{ performedAt: 'desc' }, { createdAt: 'desc' }],
      select: { id: true, performedAt: true, kind: true, passed: true },
    });
  }
}
