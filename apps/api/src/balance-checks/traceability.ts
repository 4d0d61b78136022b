import { Decimal, USP41_LIMIT_PERCENT } from '@registry/metrology';

import type { BalanceRecord } from '../balances/balance.repository';
import { DomainError } from '../common/problem/domain-error';
import { isOverdue } from '../impact/lab-calendar';
import type { ReferenceWeightRecord } from '../reference-weights/reference-weight.repository';
import type { WeightUsed } from './balance-check.responses';

/*
 * What makes a check weight, or a balance reading, traceable. A broken rule is
 * a 422 `traceability-violation` problem naming the rule (the same problem
 * and rule style as calibration records), and the request field in `errors`.
 */

export type WeightRule =
  'reference-weight-of-lab' | 'reference-weight-in-service' | 'reference-weight-certificate-current' | 'reference-weight-suitable';

export type BalanceRule = 'balance-in-service' | 'balance-calibration-current';

export interface RuleBroken {
  readonly rule: WeightRule | BalanceRule;
  readonly itemId: string;
  readonly field: string;
  readonly detail: string;
}

export function traceabilityViolation(summary: string, broken: readonly RuleBroken[]): DomainError {
  return new DomainError(
    'traceability-violation',
    `${summary} ${broken.map((b) => b.detail).join(' ')}`,
    broken.map((b) => ({ field: b.field, reason: b.detail })),
    { violations: broken.map((b) => ({ rule: b.rule, itemId: b.itemId, detail: b.detail, exceptionAllowed: false })) },
  );
}

/**
 * The weight as a check uses it, or the rule it breaks: a weight of the
 * balance's lab, in service, with a certificate due date on record that has
 * not passed at the time of the check (in the lab's time zone), and not
 * heavier than the balance's capacity.
 */
export function usableWeight(
  weight: ReferenceWeightRecord | null,
  requestedId: string,
  field: string,
  balance: BalanceRecord,
  performedAt: Date,
  timeZone: string,
): WeightUsed {
  const broken = (rule: WeightRule, detail: string) =>
    traceabilityViolation('The reference weight cannot be used for this check.', [{ rule, itemId: requestedId, field, detail }]);
  if (!weight || weight.labId !== balance.labId) {
    throw broken('reference-weight-of-lab', `No reference weight of the balance’s lab has id ${requestedId}.`);
  }
  if (weight.status !== 'in-service') {
    throw broken('reference-weight-in-service', `Reference weight ${weight.assetTag} is ${weight.status}.`);
  }
  if (weight.certificateDue === null) {
    throw broken(
      'reference-weight-certificate-current',
      `Reference weight ${weight.assetTag} has no certificate due date on record, so its value is not traceable.`,
    );
  }
  if (isOverdue(weight.certificateDue, performedAt, timeZone)) {
    throw broken(
      'reference-weight-certificate-current',
      `The certificate of reference weight ${weight.assetTag} was due on ${weight.certificateDue}, before the check.`,
    );
  }
  if (new Decimal(weight.nominalMassG).greaterThan(balance.capacityG)) {
    throw broken(
      'reference-weight-suitable',
      `Reference weight ${weight.assetTag} (${weight.nominalMassG} g) is above the balance’s capacity (${balance.capacityG} g).`,
    );
  }
  return {
    id: weight.id,
    assetTag: weight.assetTag,
    oimlClass: weight.oimlClass,
    nominalMassG: weight.nominalMassG,
    valueG: weight.conventionalMassG ?? weight.nominalMassG,
    valueSource: weight.conventionalMassG === null ? 'nominal' : 'certificate',
    expandedUncertaintyG: weight.expandedUncertaintyG,
    certificateDue: weight.certificateDue,
  };
}

/**
 * USP <41> accuracy: the test weight lies between 5 % and 100 % of the
 * capacity, and its uncertainty is at most a third of the 0.10 % limit.
 */
export function assertUsp41AccuracyWeight(weight: WeightUsed, balance: BalanceRecord, field: string): void {
  const capacity = new Decimal(balance.capacityG);
  const value = new Decimal(weight.valueG);
  const min = capacity.times('0.05');
  const broken = (detail: string) =>
    traceabilityViolation('The reference weight cannot be used for this check.', [
      { rule: 'reference-weight-suitable', itemId: weight.id, field, detail },
    ]);
  if (value.lessThan(min) || value.greaterThan(capacity)) {
    throw broken(
      `USP <41> accuracy needs a test weight between 5 % and 100 % of the capacity (${min.toFixed()} g to ${capacity.toFixed()} g); ` +
        `${weight.assetTag} is ${weight.valueG} g.`,
    );
  }
  const maxUncertainty = value.times(USP41_LIMIT_PERCENT).div(100).div(3);
  if (weight.expandedUncertaintyG !== null && new Decimal(weight.expandedUncertaintyG).greaterThan(maxUncertainty)) {
    throw broken(
      `USP <41> accepts a test weight whose uncertainty is at most a third of the 0.10 % limit ` +
        `(${maxUncertainty.toSignificantDigits(3).toFixed()} g); ${weight.assetTag} has ${weight.expandedUncertaintyG} g.`,
    );
  }
}
