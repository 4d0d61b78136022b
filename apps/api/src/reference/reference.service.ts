import { Injectable } from '@nestjs/common';
import { VESSEL_MATERIALS, listToleranceTables } from '@registry/metrology';

import { echoDecimal } from '../common/quantity';
import type { MaterialList, ToleranceList, ToleranceQuery } from './reference.schemas';

const TOLERANCE_CAUTION =
  'Limits marked from-memory were transcribed without a published copy at hand: check them against the standard ' +
  'before a laboratory relies on them. Sizes not listed have no limit here; nothing is interpolated.';

/** Read-only reference tables of the metrology library. */
@Injectable()
export class ReferenceService {
  tolerances(query: ToleranceQuery): ToleranceList {
    const tables = listToleranceTables().filter(
      (t) =>
        (query.kind === undefined || t.kinds.includes(query.kind)) &&
        (query.accuracyClass === undefined || t.classes.includes(query.accuracyClass)) &&
        (query.family === undefined || t.family === query.family),
    );
    return {
      caution: TOLERANCE_CAUTION,
      tables: tables.map((t) => ({
        id: t.id,
        family: t.family,
        standard: t.standard,
        table: t.table,
        title: t.title,
        kinds: [...t.kinds],
        classes: [...t.classes],
        verification: { ...t.verification },
        checkedAgainst: t.checkedAgainst ?? null,
        note: t.note ?? null,
        rows: t.rows.map((r) => ({
          nominalMl: r.nominalMl,
          limitMl: { ...r.limitMl },
          randomLimitMl: r.randomLimitMl ? { ...r.randomLimitMl } : null,
          fromMemory: r.fromMemory === true,
        })),
      })),
    };
  }

  materials(): MaterialList {
    return {
      materials: VESSEL_MATERIALS.map((m) => ({
        id: m.id,
        name: m.name,
        expansionCoefficientPerK: echoDecimal(m.expansionCoefficientPerK),
        source: m.source,
      })),
    };
  }
}
