import { Injectable } from '@nestjs/common';

import { type BalanceRecord, BalanceRepository } from '../balances/balance.repository';
import { DomainError } from '../common/problem/domain-error';
import type { FieldError } from '../common/problem/problem-catalog';
import { type InstrumentRecord, InstrumentRepository } from '../instruments/instrument.repository';
import type { Tx } from '../inventory/inventory-workflow';
import { type VesselRecord, VesselRepository } from '../vessels/vessel.repository';
import type { DeliveryMode } from '../vessels/vessel-rules';
import type { ComputationSubject } from './calibration-computation';

/** Instruments that can give the water temperature. */
const THERMOMETER_KINDS: readonly string[] = ['thermometer', 'thermohygrometer'];

/** The inventory items a calibration names, read through the inventory's own repositories. */
@Injectable()
export class CalibrationItems {
  constructor(
    private readonly vessels: VesselRepository,
    private readonly balances: BalanceRepository,
    private readonly instruments: InstrumentRepository,
  ) {}

  vessel(tx: Tx, id: string): Promise<VesselRecord | null> {
    return this.vessels.findById(tx, id);
  }

  async existingVessel(tx: Tx, id: string): Promise<VesselRecord> {
    const vessel = await this.vessels.findById(tx, id);
    if (!vessel) throw new Error(`vessel ${id} of a calibration is missing`);
    return vessel;
  }

  /** The balance and thermometer, both of the lab; otherwise a 400 naming each field. */
  async instrumentsOf(
    tx: Tx,
    labId: string,
    balanceId: string,
    thermometerId: string,
  ): Promise<{ balance: BalanceRecord; thermometer: InstrumentRecord }> {
    const [balance, thermometer] = await Promise.all([this.balances.findById(tx, balanceId), this.instruments.findById(tx, thermometerId)]);
    const errors: FieldError[] = [];
    if (!balance || balance.labId !== labId) errors.push({ field: 'balanceId', reason: 'is not a balance of the vessel’s lab' });
    if (!thermometer || thermometer.labId !== labId || !THERMOMETER_KINDS.includes(thermometer.kind)) {
      errors.push({ field: 'thermometerId', reason: 'is not a thermometer or thermohygrometer of the vessel’s lab' });
    }
    if (!balance || !thermometer || errors.length > 0) {
      throw new DomainError('validation-failed', `${errors.length} field(s) failed validation.`, errors);
    }
    return { balance, thermometer };
  }
}

export function subjectOf(vessel: VesselRecord, balance: BalanceRecord, deliveryMode: DeliveryMode): ComputationSubject {
  return { vessel, deliveryMode, balanceWeightDensityKgPerM3: balance.adjustmentWeightDensityKgPerM3 };
}

/** The weighings cannot have been made after the request. */
export function assertNotInFuture(performedAt: Date, now: Date): void {
  if (performedAt.getTime() > now.getTime()) {
    throw new DomainError('validation-failed', 'performedAt is in the future.', [
      { field: 'performedAt', reason: 'must not be in the future' },
    ]);
  }
}
