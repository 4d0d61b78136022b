import {
  Decimal,
  USP41_SD_FLOOR_FACTOR,
  dec,
  eccentricityCheck,
  sensitivityCheck,
  usp41Accuracy,
  usp41Repeatability,
} from '@registry/metrology';

import { prefixed, renamed, withFieldPaths } from '../calculations/field-paths';
import { echoDecimal as echo, formatDecimal as str } from '../common/quantity';
import type {
  BalanceUsed,
  EccentricityInputs,
  EccentricityResults,
  QuickInputs,
  QuickResults,
  Usp41Inputs,
  Usp41Results,
  WeightUsed,
} from './balance-check.responses';
import type { EccentricityCheck, QuickCheck, RecordCheck, Usp41Check } from './balance-check.schemas';

/*
 * Turns a check request into the stored inputs and results, through the
 * metrology library. Pure: the balance and the weights come in already read
 * and vetted (reference-weight rules), nothing is written.
 */

export type Evaluation =
  | { kind: 'quick'; inputs: QuickInputs; results: QuickResults; passed: boolean; minimumWeightG: null }
  | { kind: 'usp41'; inputs: Usp41Inputs; results: Usp41Results; passed: boolean; minimumWeightG: string }
  | { kind: 'eccentricity'; inputs: EccentricityInputs; results: EccentricityResults; passed: boolean; minimumWeightG: null };

export interface EvaluationContext {
  readonly balance: BalanceUsed;
  /** The check's weight (the accuracy weight of a USP <41> check). */
  readonly weight: WeightUsed;
  /** A USP <41> check's repeatability weight (the same weight unless another was named). */
  readonly repeatabilityWeight: WeightUsed;
}

export function evaluate(body: RecordCheck, ctx: EvaluationContext): Evaluation {
  switch (body.kind) {
    case 'quick':
      return quick(body, ctx);
    case 'usp41':
      return usp41(body, ctx);
    case 'eccentricity':
      return eccentricity(body, ctx);
  }
}

function quick(body: QuickCheck, ctx: EvaluationContext): Evaluation {
  const readings = body.readingsG.map((readingG, i) =>
    withFieldPaths(renamed([[/^readingG$/, `readingsG.${i}`]]), () =>
      sensitivityCheck({ readingG, referenceWeightG: ctx.weight.valueG, limitG: body.limitG }),
    ),
  );
  const pass = readings.every((r) => r.pass);
  return {
    kind: 'quick',
    inputs: { referenceWeight: ctx.weight, balance: ctx.balance, readingsG: body.readingsG.map(echo), limitG: echo(body.limitG) },
    results: {
      readings: readings.map((r, i) => ({
        readingG: echo(body.readingsG[i] as string),
        deviationG: str(r.deviationG),
        deviationPercent: str(r.deviationPercent),
        pass: r.pass,
      })),
      maxDeviationG: str(Decimal.max(...readings.map((r) => r.deviationG.abs()))),
      limitG: echo(body.limitG),
      pass,
    },
    passed: pass,
    minimumWeightG: null,
  };
}

function eccentricityOf(readings: EccentricityCheck | NonNullable<Usp41Check['eccentricity']>, prefix: string) {
  const r = withFieldPaths(prefixed(prefix), () => eccentricityCheck(readings));
  const inputs = {
    centreReadingG: echo(readings.centreReadingG),
    offCentreReadingsG: readings.offCentreReadingsG.map(echo),
    limitG: echo(readings.limitG),
  };
  const results: EccentricityResults = {
    deviationsG: r.deviationsG.map(str),
    maxDeviationG: str(r.maxDeviationG),
    maxDeviationIndex: r.maxDeviationIndex,
    limitG: echo(readings.limitG),
    pass: r.pass,
  };
  return { inputs, results };
}

function eccentricity(body: EccentricityCheck, ctx: EvaluationContext): Evaluation {
  const { inputs, results } = eccentricityOf(body, '');
  return {
    kind: 'eccentricity',
    inputs: { referenceWeight: ctx.weight, balance: ctx.balance, ...inputs },
    results,
    passed: results.pass,
    minimumWeightG: null,
  };
}

function usp41(body: Usp41Check, ctx: EvaluationContext): Evaluation {
  const { readingsG, smallestNetWeightG } = body.repeatability;
  const rep = withFieldPaths(renamed([[/^readingsG/, 'repeatability.readingsG']]), () =>
    usp41Repeatability({
      readingsG,
      testWeightG: ctx.repeatabilityWeight.nominalMassG,
      readabilityG: ctx.balance.readabilityG,
      smallestNetWeightG,
    }),
  );
  // The weight's range and uncertainty were vetted against the same USP <41> rules (reference-weight rules).
  const acc = withFieldPaths(renamed([[/^readingG$/, 'accuracyReadingG']]), () =>
    usp41Accuracy({
      readingG: body.accuracyReadingG,
      testWeightG: ctx.weight.valueG,
      capacityG: ctx.balance.capacityG,
      ...(ctx.weight.expandedUncertaintyG === null ? {} : { testWeightMpeG: ctx.weight.expandedUncertaintyG }),
    }),
  );
  const ecc = body.eccentricity && eccentricityOf(body.eccentricity, 'eccentricity.');
  const pass = rep.pass && acc.pass && (ecc?.results.pass ?? true);
  const minimumWeightG = str(rep.minimumWeightG);
  return {
    kind: 'usp41',
    inputs: {
      referenceWeight: ctx.weight,
      repeatabilityWeight: ctx.repeatabilityWeight,
      balance: ctx.balance,
      repeatabilityReadingsG: readingsG.map(echo),
      smallestNetWeightG: smallestNetWeightG === undefined ? null : echo(smallestNetWeightG),
      accuracyReadingG: echo(body.accuracyReadingG),
      eccentricity: ecc?.inputs ?? null,
    },
    results: {
      repeatability: {
        n: rep.n,
        meanG: str(rep.meanG),
        standardDeviationG: str(rep.standardDeviationG),
        sFloorG: str(dec(ctx.balance.readabilityG).times(USP41_SD_FLOOR_FACTOR)),
        sUsedG: str(rep.sUsedG),
        floorApplied: rep.floorApplied,
        referenceMassG: str(rep.referenceMassG),
        relativeTo: rep.relativeTo,
        relativeRepeatabilityPercent: str(rep.relativeRepeatabilityPercent),
        limitPercent: str(rep.limitPercent),
        pass: rep.pass,
      },
      minimumWeightG,
      accuracy: {
        testWeightG: echo(ctx.weight.valueG),
        readingG: echo(body.accuracyReadingG),
        deviationG: str(acc.deviationG),
        deviationPercent: str(acc.deviationPercent),
        limitG: str(acc.limitG),
        limitPercent: str(acc.limitPercent),
        pass: acc.pass,
      },
      eccentricity: ecc?.results ?? null,
      pass,
    },
    passed: pass,
    minimumWeightG,
  };
}
