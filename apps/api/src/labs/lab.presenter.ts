import type { Lab } from './labs.repository';
import type { LabView } from './labs.schemas';

/** The wire form of a lab. */
export function presentLab(lab: Lab): LabView {
  return {
    id: lab.id,
    code: lab.code,
    name: lab.name,
    timeZone: lab.timeZone,
    fourEyesRequired: lab.fourEyesRequired,
    balanceCheckWindowDays: lab.balanceCheckWindowDays,
    factorValidityDays: lab.factorValidityDays,
    allowTraceabilityExceptions: lab.allowTraceabilityExceptions,
    quarantineOnFailedCalibration: lab.quarantineOnFailedCalibration,
    retiredAt: lab.retiredAt?.toISOString() ?? null,
    version: lab.version,
    createdAt: lab.createdAt.toISOString(),
    updatedAt: lab.updatedAt.toISOString(),
  };
}
