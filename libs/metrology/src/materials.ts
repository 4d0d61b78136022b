import { Decimal, type DecimalInput, dec } from './decimal';
import { MetrologyInputError } from './errors';

/** A vessel material and its cubic (volume) thermal expansion coefficient gamma, with where the value comes from. */
export interface VesselMaterial {
  readonly id: string;
  readonly name: string;
  /** Cubic expansion coefficient, 1/K, as a decimal string. */
  readonly expansionCoefficientPerK: string;
  readonly source: string;
}

/*
 * gamma = 3 alpha for an isotropic solid (alpha the linear coefficient). Glass values
 * are the nominal ones of the glass type; plastics vary by grade, so their rows are
 * representative values inside the published spread, and the manufacturer's figure
 * should be entered as expansionCoefficientPerK when it is known.
 */
export const VESSEL_MATERIALS: readonly VesselMaterial[] = [
  {
    id: 'borosilicate-3-3',
    name: 'Borosilicate glass 3.3',
    expansionCoefficientPerK: '9.9e-6',
    source:
      "ISO 3585 glass type: mean linear expansion alpha(20-300 °C) = 3.3e-6 /K (DIN 52328 figure in glass makers' data sheets); gamma = 3 alpha",
  },
  {
    id: 'borosilicate-5-0',
    name: 'Borosilicate glass 5.0',
    expansionCoefficientPerK: '15e-6',
    source:
      'common practice: the type designation "5.0" is its nominal linear alpha = 5.0e-6 /K; gamma = 3 alpha (not checked against the standard text)',
  },
  {
    id: 'soda-lime',
    name: 'Soda-lime glass',
    expansionCoefficientPerK: '27e-6',
    source:
      'linear alpha = 9.1e-6 /K quoted by a laboratory-glass maker when comparing with borosilicate 3.3; gamma = 3 alpha = 27.3e-6, rounded',
  },
  {
    id: 'polypropylene',
    name: 'Polypropylene (PP)',
    expansionCoefficientPerK: '300e-6',
    source:
      "representative: published linear alpha 81-100e-6 /K (plastics property tables) and 100-150e-6 /K (moulders' data); gamma = 3 x 100e-6",
  },
  {
    id: 'polymethylpentene',
    name: 'Polymethylpentene (PMP, TPX)',
    expansionCoefficientPerK: '350e-6',
    source: 'representative: published linear alpha 117e-6 /K and 120e-6 /K (material data pages); gamma = 3 x 117e-6, rounded',
  },
  {
    id: 'polystyrene',
    name: 'Polystyrene (PS)',
    expansionCoefficientPerK: '210e-6',
    source: 'representative: published linear alpha 50-83e-6 /K (plastics property tables); gamma = 3 x 70e-6',
  },
];

const BY_ID = new Map(VESSEL_MATERIALS.map((m) => [m.id, m]));

/** The table row for a material id, or undefined. */
export function findMaterial(id: string): VesselMaterial | undefined {
  return BY_ID.get(id);
}

export interface ExpansionCoefficient {
  readonly expansionCoefficientPerK: Decimal;
  /** The material id when the value came from the table. */
  readonly materialId?: string;
  readonly source: string;
}

/**
 * Resolves the cubic expansion coefficient from exactly one of: a material id from
 * the table, or an explicit value in 1/K (e.g. from the vessel maker). Refuses both
 * or neither, unknown ids, and negative or implausibly large values (> 1e-3 /K).
 */
export function resolveExpansionCoefficient(input: {
  readonly material?: string;
  readonly expansionCoefficientPerK?: DecimalInput;
}): ExpansionCoefficient {
  const hasMaterial = input.material !== undefined;
  const hasValue = input.expansionCoefficientPerK !== undefined;
  if (hasMaterial === hasValue) {
    throw new MetrologyInputError('material', 'give either a material or an expansionCoefficientPerK, exactly one');
  }
  if (input.material !== undefined) {
    const row = BY_ID.get(input.material);
    if (!row) {
      throw new MetrologyInputError('material', `is unknown; known: ${VESSEL_MATERIALS.map((m) => m.id).join(', ')}`);
    }
    return { expansionCoefficientPerK: new Decimal(row.expansionCoefficientPerK), materialId: row.id, source: row.source };
  }
  const gamma = dec(input.expansionCoefficientPerK as DecimalInput, 'expansionCoefficientPerK');
  if (gamma.lessThan(0) || gamma.greaterThan('1e-3')) {
    throw new MetrologyInputError('expansionCoefficientPerK', 'must be between 0 and 1e-3 /K (a cubic coefficient)', {
      min: '0',
      max: '1e-3',
      unit: '1/K',
    });
  }
  return { expansionCoefficientPerK: gamma, source: 'entered value' };
}
