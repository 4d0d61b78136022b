import type { CalibrationRecord, FactorRef } from './calibration.repository';
import type { CalibrationSummary, CalibrationView } from './calibration.responses';

const iso = (d: Date | null): string | null => (d === null ? null : d.toISOString());

/** A calibration in a list: everything but its inputs and results. */
export function presentSummary(c: CalibrationRecord, factor: FactorRef | null): CalibrationSummary {
  return {
    id: c.id,
    labId: c.labId,
    vesselId: c.vesselId,
    performerId: c.performerId,
    enteredById: c.enteredById,
    balanceId: c.balanceId,
    thermometerId: c.thermometerId,
    state: c.state,
    performedAt: c.performedAt.toISOString(),
    deliveryMode: c.deliveryMode,
    notes: c.notes,
    verdict: c.verdict,
    libraryVersion: c.libraryVersion,
    submittedAt: iso(c.submittedAt),
    traceabilityException: c.traceabilityException,
    reviewerId: c.reviewerId,
    reviewedAt: iso(c.reviewedAt),
    reviewNote: c.reviewNote,
    voidedById: c.voidedById,
    voidedAt: iso(c.voidedAt),
    voidReason: c.voidReason,
    factor,
    version: c.version,
    createdAt: c.createdAt.toISOString(),
    updatedAt: c.updatedAt.toISOString(),
  };
}

/** One calibration with its inputs and, once submitted, its frozen results. */
export function presentCalibration(c: CalibrationRecord, factor: FactorRef | null): CalibrationView {
  return { ...presentSummary(c, factor), inputs: c.inputs, results: c.results };
}
