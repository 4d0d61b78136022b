import { Injectable } from '@nestjs/common';
import { USP41_SD_FLOOR_FACTOR, dec, eccentricityCheck, sensitivityCheck, usp41Accuracy, usp41Repeatability } from '@registry/metrology';

import { formatDecimal as str } from '../common/quantity';
import type { BalanceCheckRequest, BalanceCheckResponse } from './balance.schemas';
import { type ApiWarning, prefixed, renamed, withFieldPaths } from './field-paths';

const REPEATABILITY_FIELDS = renamed([[/^readingsG/, 'replicatesG']]);
const ACCURACY_FIELDS = renamed([[/^(readingG|testWeightG|testWeightMpeG)$/, 'accuracy.$1']]);

/** USP <41> repeatability, accuracy and minimum weight, plus sensitivity and eccentricity against lab limits. */
@Injectable()
export class BalanceCheckService {
  check(body: BalanceCheckRequest): BalanceCheckResponse {
    const warnings: ApiWarning[] = [];
    const rep = withFieldPaths(REPEATABILITY_FIELDS, () =>
      usp41Repeatability({
        readingsG: body.replicatesG,
        testWeightG: body.testWeightG,
        readabilityG: body.readabilityG,
        smallestNetWeightG: body.smallestNetWeightG,
      }),
    );
    const acc = body.accuracy && withFieldPaths(ACCURACY_FIELDS, () => usp41Accuracy({ ...body.accuracy!, capacityG: body.capacityG }));
    if (!acc) {
      warnings.push({
        code: 'accuracy-not-checked',
        field: 'accuracy',
        message: 'USP <41> also asks for the accuracy test; give accuracy',
      });
    } else if (body.capacityG === undefined) {
      warnings.push({
        code: 'capacity-not-given',
        field: 'capacityG',
        message: 'without capacityG the 5 % to 100 % of capacity rule for the accuracy test weight is not checked',
      });
    }
    const sens = body.sensitivity && withFieldPaths(prefixed('sensitivity.'), () => sensitivityCheck(body.sensitivity!));
    const ecc = body.eccentricity && withFieldPaths(prefixed('eccentricity.'), () => eccentricityCheck(body.eccentricity!));

    const usp41 = !rep.pass || (acc && !acc.pass) ? 'fail' : acc ? 'pass' : 'incomplete';
    const lab = [sens, ecc].filter((c) => c !== undefined);
    return {
      repeatability: {
        n: rep.n,
        meanG: str(rep.meanG),
        standardDeviationG: str(rep.standardDeviationG),
        sFloorG: str(dec(body.readabilityG).times(USP41_SD_FLOOR_FACTOR)),
        sUsedG: str(rep.sUsedG),
        floorApplied: rep.floorApplied,
        referenceMassG: str(rep.referenceMassG),
        relativeTo: rep.relativeTo,
        relativeRepeatabilityPercent: str(rep.relativeRepeatabilityPercent),
        limitPercent: str(rep.limitPercent),
        pass: rep.pass,
      },
      minimumWeightG: str(rep.minimumWeightG),
      accuracy: acc
        ? {
            deviationG: str(acc.deviationG),
            deviationPercent: str(acc.deviationPercent),
            limitG: str(acc.limitG),
            limitPercent: str(acc.limitPercent),
            pass: acc.pass,
          }
        : null,
      sensitivity: sens
        ? { deviationG: str(sens.deviationG), deviationPercent: str(sens.deviationPercent), limitG: str(sens.limitG), pass: sens.pass }
        : null,
      eccentricity: ecc
        ? {
            deviationsG: ecc.deviationsG.map(str),
            maxDeviationG: str(ecc.maxDeviationG),
            maxDeviationIndex: ecc.maxDeviationIndex,
            limitG: str(ecc.limitG),
            pass: ecc.pass,
          }
        : null,
      usp41,
      labChecks: lab.length === 0 ? 'not-run' : lab.every((c) => c.pass) ? 'pass' : 'fail',
      warnings,
    };
  }
}
