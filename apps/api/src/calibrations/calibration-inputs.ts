import { Decimal, type VesselKind } from '@registry/metrology';

import { echoDecimal } from '../common/quantity';
import { DomainError } from '../common/problem/domain-error';
import type { FieldError } from '../common/problem/problem-catalog';
import type { DeliveryMode } from '../vessels/vessel-rules';
import type { CalibrationInputs } from './calibration.responses';
import type { CreateCalibration, UpdateCalibration } from './calibration.schemas';

/** Ware tested at several points (a correction curve); everything else at its nominal volume only. */
export const CURVE_KINDS: readonly VesselKind[] = ['burette', 'graduated-pipette', 'graduated-cylinder', 'piston-pipette-variable'];

const READINGS = { contain: ['filledG', 'emptyG'], deliver: ['beforeG', 'afterG'] } as const;

type Replicate = CalibrationInputs['points'][number]['replicates'][number];

/** The measurement inputs of a create body, or of a stored draft after a PATCH; point volumes may be left out for one-mark ware. */
export interface EnteredInputs extends Omit<CalibrationInputs, 'points'> {
  readonly points: readonly { readonly nominalVolumeMl?: string | undefined; readonly replicates: readonly Replicate[] }[];
}

export interface VesselShape {
  readonly kind: VesselKind;
  readonly nominalVolumeMl: string;
  readonly deliveryMode: DeliveryMode;
}

export function enteredFromCreate(body: CreateCalibration): EnteredInputs {
  return {
    points: body.points,
    airConditions: body.airConditions,
    airDensityKgPerM3: body.airDensityKgPerM3,
    weightDensityKgPerM3: body.weightDensityKgPerM3,
    waterAirSaturated: body.waterAirSaturated,
    uncertainties: body.uncertainties,
  };
}

/** A PATCH over the stored inputs: given members replace; air conditions and a measured density replace each other. */
export function enteredFromPatch(current: CalibrationInputs, patch: UpdateCalibration): EnteredInputs {
  const air =
    patch.airConditions !== undefined
      ? { airConditions: patch.airConditions, airDensityKgPerM3: undefined }
      : patch.airDensityKgPerM3 !== undefined
        ? { airConditions: undefined, airDensityKgPerM3: patch.airDensityKgPerM3 }
        : { airConditions: current.airConditions, airDensityKgPerM3: current.airDensityKgPerM3 };
  return {
    points: patch.points ?? current.points,
    ...air,
    weightDensityKgPerM3: patch.weightDensityKgPerM3 === null ? undefined : (patch.weightDensityKgPerM3 ?? current.weightDensityKgPerM3),
    waterAirSaturated: patch.waterAirSaturated ?? current.waterAirSaturated,
    uncertainties: patch.uncertainties ?? current.uncertainties,
  };
}

/**
 * The inputs as stored: checked against the vessel (number and volumes of points, the readings
 * of its delivery mode) and every quantity in plain notation. Throws one 400 naming every field.
 */
export function checkedInputs(entered: EnteredInputs, vessel: VesselShape): CalibrationInputs {
  const errors: FieldError[] = [];
  const nominal = new Decimal(vessel.nominalVolumeMl);
  const curve = CURVE_KINDS.includes(vessel.kind);
  if (!curve && entered.points.length !== 1) {
    errors.push({ field: 'points', reason: `a ${vessel.kind} is calibrated at one point, its nominal volume (${nominal.toFixed()} mL)` });
  }
  if (curve && entered.points.length < 2) {
    errors.push({ field: 'points', reason: `a ${vessel.kind} is calibrated at two or more volumes up to ${nominal.toFixed()} mL` });
  }
  const seen = new Map<string, number>();
  const points = entered.points.map((p, i) => {
    const field = `points.${i}.nominalVolumeMl`;
    let volume = nominal;
    if (p.nominalVolumeMl === undefined) {
      if (curve) errors.push({ field, reason: `is required for a ${vessel.kind} (the volume tested at)` });
    } else {
      volume = new Decimal(p.nominalVolumeMl);
      if (!curve && !volume.equals(nominal)) {
        errors.push({ field, reason: `must be the vessel's nominal volume, ${nominal.toFixed()} mL (or left out)` });
      } else if (!volume.greaterThan(0) || volume.greaterThan(nominal)) {
        errors.push({ field, reason: `must be greater than 0 and at most the nominal volume, ${nominal.toFixed()} mL` });
      }
      const earlier = seen.get(volume.toFixed());
      if (earlier !== undefined) errors.push({ field, reason: `repeats the volume of point ${earlier}; test each volume once` });
      seen.set(volume.toFixed(), i);
    }
    p.replicates.forEach((r, j) => errors.push(...readingErrors(r, vessel.deliveryMode, `points.${i}.replicates.${j}.`)));
    return { nominalVolumeMl: volume.toFixed(), replicates: p.replicates.map(plainReplicate) };
  });
  if (errors.length > 0) throw new DomainError('validation-failed', `${errors.length} field(s) failed validation.`, errors);
  return compact({
    points,
    airConditions: entered.airConditions && compact(plainAll(entered.airConditions)),
    airDensityKgPerM3: plainOrUndefined(entered.airDensityKgPerM3),
    weightDensityKgPerM3: plainOrUndefined(entered.weightDensityKgPerM3),
    waterAirSaturated: entered.waterAirSaturated,
    uncertainties: compact(plainAll(entered.uncertainties)),
  });
}

/** Each replicate carries exactly the two readings of the vessel's delivery mode. */
function readingErrors(r: Replicate, mode: DeliveryMode, path: string): FieldError[] {
  const other = mode === 'contain' ? 'deliver' : 'contain';
  return [
    ...READINGS[mode]
      .filter((f) => r[f] === undefined)
      .map((f) => ({ field: `${path}${f}`, reason: `is required: the vessel is adjusted to ${mode}` })),
    ...READINGS[other]
      .filter((f) => r[f] !== undefined)
      .map((f) => ({ field: `${path}${f}`, reason: `is not used: the vessel is adjusted to ${mode}` })),
  ];
}

const plainOrUndefined = (v: string | undefined): string | undefined => (v === undefined ? undefined : echoDecimal(v));

function plainAll<T extends object>(values: T): T {
  return Object.fromEntries(Object.entries(values).map(([k, v]) => [k, typeof v === 'string' ? echoDecimal(v) : v])) as T;
}

const plainReplicate = (r: Replicate): Replicate => compact(plainAll(r));

/** Drops undefined members, so stored JSON and echoes carry only what was given. */
function compact<T extends object>(value: T): T {
  return Object.fromEntries(Object.entries(value).filter(([, v]) => v !== undefined)) as T;
}
