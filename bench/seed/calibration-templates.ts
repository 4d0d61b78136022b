import { waterDensity } from '@registry/metrology';

import { computeCalibration } from '../../apps/api/src/calibrations/calibration-computation';
import { checkedInputs } from '../../apps/api/src/calibrations/calibration-inputs';
import type { CalibrationInputs } from '../../apps/api/src/calibrations/calibration.responses';
import { factorValues } from '../../apps/api/src/factors/factor-issuer';
import { type DeliveryMode, resolveVessel, type ResolvedVessel } from '../../apps/api/src/vessels/vessel-rules';
import { BALANCE_MODELS, type VesselModel } from './catalogue';
import { CopyText, escapeCopy } from './copy-writer';
import type { SeededRandom } from './random';

/*
 * Calibration records as the service writes them. For every vessel model a few dozen runs are
 * computed for real (checkedInputs + computeCalibration, the submission's own code) from varied
 * replicate readings; each generated calibration reuses one of them with its tare moved by a
 * random amount: every net mass, hence every result, stays exactly what the library computed,
 * while the raw readings differ from record to record.
 */

export interface VesselType {
  readonly model: VesselModel;
  readonly deliveryMode: DeliveryMode;
  readonly resolved: ResolvedVessel;
  readonly templates: readonly CalibrationTemplate[];
}

export interface CalibrationTemplate {
  readonly verdict: 'pass' | 'fail' | 'no-limit';
  readonly air: { readonly temperatureC: string; readonly pressurePa: string; readonly relativeHumidityPercent: string };
  /** The inputs JSON split around each reading (readings in order of `baseUnits`). */
  readonly inputsParts: readonly string[];
  /** Each reading in balance units (10^-decimals g), before the record's tare shift. */
  readonly baseUnits: readonly number[];
  readonly decimals: number;
  /** Largest tare shift (units) either way that keeps readings positive and within capacity. */
  readonly maxShiftUnits: number;
  /** The results JSON split around computedAt and traceability.checkedAt. */
  readonly resultsParts: readonly [string, string, string];
  /** The factor the approval issues (absent for a failed run). */
  readonly factor: ReturnType<typeof factorValues> | null;
  /** A correction volume a benchmark may ask for: the nominal for one-mark ware, a point on a curve. */
  readonly indicatedVolumeMl: string;
}

const COMPUTED_AT = '@@COMPUTED_AT@@';
const CHECKED_AT = '@@CHECKED_AT@@';
const READING = /"@@R@@"/g;

/** Dry mass of the vessel or of the weighing beaker, g. */
function tareG(model: VesselModel, mode: DeliveryMode): number {
  const v = Number(model.nominalMl);
  if (mode === 'contain') return model.kind === 'graduated-cylinder' ? 60 + 0.5 * v : 25 + 0.35 * v;
  if (v <= 1) return 12;
  if (v <= 10) return 32;
  return 48 + 0.2 * v;
}

/** Standard uncertainties of a run on this model's balance (typical of the trade, common practice). */
function uncertainties(model: VesselModel) {
  const balance = BALANCE_MODELS[model.balance];
  const calibrationG = { 'semi-micro': '0.00002', analytical: '0.00015', 'precision-600': '0.0015', 'precision-2200': '0.015' }[
    model.balance
  ];
  const v = Number(model.nominalMl);
  const meniscus = model.kind.startsWith('piston') ? Math.max(v * 0.0005, 0.00002) : Math.max(v * 0.00012, 0.0002);
  return {
    balanceCalibrationG: calibrationG,
    balanceResolutionG: balance.readabilityG,
    waterTemperatureC: '0.1',
    airDensityKgPerM3: '0.005',
    meniscusMl: String(Number(meniscus.toPrecision(2))),
    evaporationMl: String(Number(Math.max(v * 0.00001, 0.000002).toPrecision(2))),
  };
}

export function vesselDeliveryMode(model: VesselModel): DeliveryMode {
  if (model.kind === 'volumetric-flask' || model.kind === 'graduated-cylinder') return 'contain';
  return 'deliver';
}

export function resolveModel(model: VesselModel): ResolvedVessel {
  const r = resolveVessel({
    kind: model.kind,
    deliveryMode: vesselDeliveryMode(model),
    nominalVolumeMl: model.nominalMl,
    graduationIntervalMl: model.graduationMl,
    accuracyClass: model.accuracyClass,
    classStandard: model.classStandard,
    material: model.material,
    expansionCoefficientPerK: null,
    limitOverrideMl: null,
    limitOverrideReason: null,
  });
  if (!r.ok) throw new Error(`vessel model ${model.key}: ${JSON.stringify(r.errors)}`);
  return r.value;
}

const plain = (units: number, decimals: number): string => {
  const s = (units / 10 ** decimals).toFixed(decimals);
  return s.includes('.') ? s.replace(/0+$/, '').replace(/\.$/, '') : s;
};
export const formatUnits = plain;

function oneTemplate(model: VesselModel, resolved: ResolvedVessel, mode: DeliveryMode, rnd: SeededRandom): CalibrationTemplate {
  const balance = BALANCE_MODELS[model.balance];
  const scale = 10 ** balance.decimals;
  const air = {
    temperatureC: (19 + rnd.next() * 5).toFixed(1),
    pressurePa: String(Math.round(96_000 + rnd.next() * 6_500)),
    relativeHumidityPercent: String(Math.round(30 + rnd.next() * 35)),
  };
  const airDensityGPerMl = (0.0012 * Number(air.pressurePa)) / 101_325;
  const expansion = Number(resolved.expansionCoefficientPerK);
  const limit = resolved.limitMl === null ? null : Number(resolved.limitMl);
  const nominal = Number(model.nominalMl);
  // The performer's systematic error as a share of the limit (or of 0.3 % without one); now and then beyond it.
  const failing = limit !== null && rnd.chance(0.04);
  const biasShare = failing ? (rnd.chance(0.5) ? 1 : -1) * (1.15 + rnd.next() * 0.8) : rnd.normal(0, 0.3);
  const biasMl = biasShare * (limit ?? nominal * 0.003);
  const waterC = 19.5 + rnd.next() * 3;
  const tare = tareG(model, mode);
  const units: number[] = [];
  const entered = model.points.map((volume) => {
    const v = Number(volume);
    const scatterMl = Math.max((limit ?? nominal * 0.003) * 0.12 * Math.sqrt(v / nominal), 1.5 / scale);
    const replicates = Array.from({ length: model.replicates }, () => {
      const t = Math.round((waterC + rnd.normal(0, 0.05)) * 10) / 10;
      const rhoW = waterDensity({ temperatureC: t.toFixed(1) }).densityKgPerM3.toNumber() / 1000;
      const z = (1 / (rhoW - airDensityGPerMl)) * (1 - airDensityGPerMl / 8);
      const volume20 = v + (biasMl * v) / nominal + rnd.normal(0, scatterMl);
      const massG = volume20 / (z * (1 - expansion * (t - 20)));
      const tareUnits = Math.round((tare + rnd.normal(0, tare * 0.0005)) * scale);
      const netUnits = Math.round(massG * scale);
      const pair = mode === 'contain' ? [tareUnits + netUnits, tareUnits] : [tareUnits, tareUnits + netUnits];
      units.push(...pair);
      const [first, second] = pair.map((u) => plain(u, balance.decimals)) as [string, string];
      return mode === 'contain'
        ? { filledG: first, emptyG: second, waterTemperatureC: t.toFixed(1) }
        : { beforeG: first, afterG: second, waterTemperatureC: t.toFixed(1) };
    });
    return { nominalVolumeMl: volume, replicates };
  });
  const vesselShape = { kind: model.kind, nominalVolumeMl: model.nominalMl, deliveryMode: mode };
  const inputs: CalibrationInputs = checkedInputs(
    { points: entered, airConditions: air, uncertainties: uncertainties(model) },
    vesselShape,
  );
  const computed = computeCalibration(
    inputs,
    {
      vessel: {
        kind: model.kind,
        accuracyClass: model.accuracyClass,
        classStandard: resolved.classStandard,
        nominalVolumeMl: model.nominalMl,
        expansionCoefficientPerK: resolved.expansionCoefficientPerK,
        limitMl: resolved.limitMl,
        limitSource: resolved.limitSource,
        limitReason: resolved.limitReason,
      },
      deliveryMode: mode,
      balanceWeightDensityKgPerM3: '8000',
    },
    new Date(0),
  );
  const results = {
    ...computed,
    computedAt: COMPUTED_AT,
    traceability: { checkedAt: CHECKED_AT, violations: [], exceptionReason: null },
  };
  const resultsJson = JSON.stringify(results);
  const [head, rest] = resultsJson.split(`"${COMPUTED_AT}"`) as [string, string];
  const [middle, tail] = rest.split(`"${CHECKED_AT}"`) as [string, string];
  const marked = {
    ...inputs,
    points: inputs.points.map((p) => ({
      ...p,
      replicates: p.replicates.map((r) =>
        mode === 'contain'
          ? { filledG: '@@R@@', emptyG: '@@R@@', waterTemperatureC: r.waterTemperatureC }
          : { beforeG: '@@R@@', afterG: '@@R@@', waterTemperatureC: r.waterTemperatureC },
      ),
    })),
  };
  const capacityUnits = Number(balance.capacityG) * scale;
  const minUnits = Math.min(...units);
  const maxUnits = Math.max(...units);
  const points = computed.points.map((p) => ({
    nominalVolumeMl: p.nominalVolumeMl,
    meanVolumeMl: p.meanVolumeMl,
    expandedUncertaintyMl: p.expandedUncertaintyMl,
    coverageFactor: p.coverageFactor,
  }));
  const middlePoint = model.points[Math.floor(model.points.length / 2)] as string;
  return {
    verdict: computed.verdict,
    air,
    inputsParts: escapeCopy(JSON.stringify(marked)).split(READING),
    baseUnits: units,
    decimals: balance.decimals,
    maxShiftUnits: Math.max(0, Math.min(Math.floor(minUnits * 0.2), Math.floor((capacityUnits - maxUnits) * 0.5))),
    resultsParts: [escapeCopy(head), escapeCopy(middle), escapeCopy(tail)],
    factor: computed.verdict === 'fail' ? null : factorValues(points),
    indicatedVolumeMl: model.points.length === 1 ? model.nominalMl : middlePoint,
  };
}

/** Every vessel model with its computed runs. */
export function buildVesselTypes(models: readonly VesselModel[], perModel: number, rnd: SeededRandom): VesselType[] {
  return models.map((model) => {
    const resolved = resolveModel(model);
    const mode = vesselDeliveryMode(model);
    const r = rnd.fork(`templates:${model.key}`);
    const templates = Array.from({ length: perModel }, () => oneTemplate(model, resolved, mode, r));
    return { model, deliveryMode: mode, resolved, templates };
  });
}

/** One record's inputs JSON (COPY text): the template's readings moved by `shiftUnits`. */
export function inputsJson(t: CalibrationTemplate, shiftUnits: number): CopyText {
  const parts = t.inputsParts;
  let out = parts[0] as string;
  for (let i = 0; i < t.baseUnits.length; i++) {
    out += `"${plain((t.baseUnits[i] as number) + shiftUnits, t.decimals)}"${parts[i + 1] as string}`;
  }
  return new CopyText(out);
}

/** One record's results JSON (COPY text), computed and checked at the submission instant. */
export function resultsJson(t: CalibrationTemplate, submittedAt: Date): CopyText {
  const at = `"${submittedAt.toISOString()}"`;
  return new CopyText(`${t.resultsParts[0]}${at}${t.resultsParts[1]}${at}${t.resultsParts[2]}`);
}
