import type { AccuracyClass, VesselKind } from '@registry/metrology';

/*
 * What the generated labs own, in the proportions of a water authority's chemistry labs.
 * Invented for benchmarks; never used as check values in tests.
 */

/** Which balance weighs a vessel's water: by the heaviest reading the calibration makes. */
export type BalanceClass = 'semi-micro' | 'analytical' | 'precision-600' | 'precision-2200';

export interface VesselModel {
  readonly key: string;
  readonly kind: VesselKind;
  readonly nominalMl: string;
  readonly graduationMl: string | null;
  readonly accuracyClass: AccuracyClass;
  readonly classStandard: string | null;
  readonly material: string;
  /** Asset tag prefix. */
  readonly tag: string;
  readonly balance: BalanceClass;
  /** Volumes tested (one-mark ware: the nominal only). */
  readonly points: readonly string[];
  readonly replicates: number;
  /** Relative frequency among a lab's vessels. */
  readonly weight: number;
}

const oneMark = (
  kind: VesselKind,
  tag: string,
  nominalMl: string,
  accuracyClass: AccuracyClass,
  balance: BalanceClass,
  weight: number,
  material = 'borosilicate-3-3',
  replicates = 10,
): VesselModel => ({
  key: `${kind}-${nominalMl}-${accuracyClass}`,
  kind,
  nominalMl,
  graduationMl: null,
  accuracyClass,
  classStandard: 'ISO',
  material,
  tag,
  balance,
  points: [nominalMl],
  replicates,
  weight,
});

const graduated = (
  kind: VesselKind,
  tag: string,
  nominalMl: string,
  graduationMl: string | null,
  accuracyClass: AccuracyClass,
  points: readonly string[],
  balance: BalanceClass,
  weight: number,
  material = 'borosilicate-3-3',
): VesselModel => ({
  key: `${kind}-${nominalMl}-${accuracyClass}`,
  kind,
  nominalMl,
  graduationMl,
  accuracyClass,
  classStandard: 'ISO',
  material,
  tag,
  balance,
  points,
  replicates: kind.startsWith('piston') ? 10 : 5,
  weight,
});

export const VESSEL_MODELS: readonly VesselModel[] = [
  oneMark('volumetric-flask', 'VF', '50', 'A', 'analytical', 6, 'borosilicate-3-3', 5),
  oneMark('volumetric-flask', 'VF', '100', 'A', 'precision-600', 12, 'borosilicate-3-3', 5),
  oneMark('volumetric-flask', 'VF', '250', 'A', 'precision-600', 6, 'borosilicate-3-3', 5),
  oneMark('volumetric-flask', 'VF', '500', 'A', 'precision-2200', 4, 'borosilicate-3-3', 5),
  oneMark('volumetric-flask', 'VF', '1000', 'A', 'precision-2200', 3, 'borosilicate-3-3', 5),
  oneMark('volumetric-flask', 'VF', '100', 'B', 'precision-600', 2, 'soda-lime', 5),
  oneMark('one-mark-pipette', 'PIP', '5', 'AS', 'analytical', 5),
  oneMark('one-mark-pipette', 'PIP', '10', 'AS', 'analytical', 8),
  oneMark('one-mark-pipette', 'PIP', '20', 'A', 'analytical', 4),
  oneMark('one-mark-pipette', 'PIP', '25', 'AS', 'analytical', 8),
  oneMark('one-mark-pipette', 'PIP', '50', 'A', 'analytical', 3),
  oneMark('one-mark-pipette', 'PIP', '25', 'B', 'analytical', 2),
  graduated('burette', 'BUR', '50', '0.1', 'A', ['5', '25', '50'], 'analytical', 5),
  graduated('burette', 'BUR', '25', '0.05', 'AS', ['2.5', '12.5', '25'], 'analytical', 4),
  graduated('burette', 'BUR', '10', '0.02', 'A', ['1', '5', '10'], 'analytical', 2),
  graduated('graduated-pipette', 'GP', '10', '0.1', 'AS', ['1', '5', '10'], 'analytical', 4),
  graduated('graduated-pipette', 'GP', '1', '0.01', 'A', ['0.1', '0.5', '1'], 'semi-micro', 2),
  graduated('graduated-cylinder', 'CYL', '100', '1', 'A', ['10', '50', '100'], 'precision-600', 3),
  graduated('graduated-cylinder', 'CYL', '500', '5', 'B', ['50', '250', '500'], 'precision-2200', 2, 'polypropylene'),
  oneMark('piston-pipette-fixed', 'PPF', '0.1', 'none', 'semi-micro', 3, 'polypropylene'),
  oneMark('piston-pipette-fixed', 'PPF', '1', 'none', 'semi-micro', 3, 'polypropylene'),
  graduated('piston-pipette-variable', 'PPV', '1', null, 'none', ['0.1', '0.5', '1'], 'semi-micro', 5, 'polypropylene'),
  graduated('piston-pipette-variable', 'PPV', '0.2', null, 'none', ['0.02', '0.1', '0.2'], 'semi-micro', 3, 'polypropylene'),
  graduated('piston-pipette-variable', 'PPV', '5', null, 'none', ['0.5', '2.5', '5'], 'analytical', 2, 'polypropylene'),
];

export interface BalanceModel {
  readonly balanceClass: BalanceClass;
  readonly model: string;
  readonly capacityG: string;
  readonly readabilityG: string;
  /** Decimal places of a reading. */
  readonly decimals: number;
  /** The weight of the daily check, g (one of REFERENCE_MASSES_G). */
  readonly checkWeightG: number;
  /** The lab's limit of a daily check, g. */
  readonly checkLimitG: string;
  /** Weight of the USP <41> repeatability test, g. */
  readonly repeatabilityWeightG: number;
}

export const BALANCE_MODELS: Readonly<Record<BalanceClass, BalanceModel>> = {
  'semi-micro': {
    balanceClass: 'semi-micro',
    model: 'Semi-micro 120 g',
    capacityG: '120',
    readabilityG: '0.00001',
    decimals: 5,
    checkWeightG: 100,
    checkLimitG: '0.0003',
    repeatabilityWeightG: 20,
  },
  analytical: {
    balanceClass: 'analytical',
    model: 'Analytical 220 g',
    capacityG: '220',
    readabilityG: '0.0001',
    decimals: 4,
    checkWeightG: 200,
    checkLimitG: '0.0005',
    repeatabilityWeightG: 20,
  },
  'precision-600': {
    balanceClass: 'precision-600',
    model: 'Precision 620 g',
    capacityG: '620',
    readabilityG: '0.001',
    decimals: 3,
    checkWeightG: 500,
    checkLimitG: '0.005',
    repeatabilityWeightG: 100,
  },
  'precision-2200': {
    balanceClass: 'precision-2200',
    model: 'Precision 2200 g',
    capacityG: '2200',
    readabilityG: '0.01',
    decimals: 2,
    checkWeightG: 2000,
    checkLimitG: '0.05',
    repeatabilityWeightG: 1000,
  },
};

/** A lab's balances, in this order; a lab with more repeats the list. */
export const LAB_BALANCES: readonly BalanceClass[] = [
  'analytical',
  'analytical',
  'semi-micro',
  'precision-600',
  'precision-2200',
  'analytical',
  'precision-600',
  'analytical',
];

/** Each lab's set of reference weights, g (OIML class E2 up to 200 g, F1 above). */
export const REFERENCE_MASSES_G: readonly number[] = [1, 10, 20, 50, 100, 200, 500, 1000, 2000];

export const FIRST_NAMES: readonly string[] = [
  'Aino',
  'Bram',
  'Carla',
  'Dario',
  'Elif',
  'Finn',
  'Greta',
  'Hugo',
  'Ines',
  'Jonas',
  'Kaija',
  'Luca',
  'Maren',
  'Nils',
  'Olga',
  'Piet',
  'Quirin',
  'Rania',
  'Sven',
  'Tilde',
  'Uma',
  'Viktor',
  'Wanda',
  'Xaver',
  'Yara',
  'Zeno',
  'Alba',
  'Bruno',
  'Cleo',
  'Dirk',
  'Edda',
  'Femi',
  'Gaia',
  'Hanno',
  'Ilse',
  'Jorik',
  'Kira',
  'Lasse',
  'Mira',
  'Noor',
];

export const LAST_NAMES: readonly string[] = [
  'Albers',
  'Brandt',
  'Castell',
  'Dahl',
  'Engel',
  'Falk',
  'Grote',
  'Hahn',
  'Iversen',
  'Jansen',
  'Keller',
  'Lorenz',
  'Mohr',
  'Nowak',
  'Ostrowski',
  'Peters',
  'Quandt',
  'Roth',
  'Sander',
  'Thiel',
  'Ulrich',
  'Vogt',
  'Wendt',
  'Yilmaz',
  'Zander',
  'Arndt',
  'Bauer',
  'Claes',
  'Dorn',
  'Eckert',
  'Fuchs',
  'Gerber',
  'Holm',
  'Imhof',
  'Jung',
  'Kraus',
  'Lindner',
  'Marx',
  'Neumann',
  'Otte',
];

const REGIONS: readonly string[] = ['NORTH', 'SOUTH', 'EAST', 'WEST', 'HILL', 'RIVER', 'PORT', 'LAKE', 'VALE', 'MOOR'];
const LAB_KINDS: readonly (readonly [string, string])[] = [
  ['DW', 'Drinking-water chemistry'],
  ['WW', 'Wastewater laboratory'],
  ['QC', 'Process control laboratory'],
];

/** Lab codes and names: the three demo labs first, then regional labs of the same authority. */
export function labIdentity(i: number): { code: string; name: string } {
  const base = [
    { code: 'DW-CHEM', name: 'Drinking-water chemistry' },
    { code: 'WW-LAB', name: 'Wastewater laboratory' },
    { code: 'TEACH', name: 'Teaching laboratory' },
  ];
  if (i < base.length) return base[i] as { code: string; name: string };
  const n = i - base.length;
  const [prefix, name] = LAB_KINDS[n % LAB_KINDS.length] as readonly [string, string];
  const region = REGIONS[Math.floor(n / LAB_KINDS.length) % REGIONS.length] as string;
  const round = Math.floor(n / (LAB_KINDS.length * REGIONS.length));
  const suffix = round === 0 ? '' : `-${round + 1}`;
  const regionName = region.charAt(0) + region.slice(1).toLowerCase();
  return { code: `${prefix}-${region}${suffix}`, name: `${name}, ${regionName} works${suffix ? ` ${round + 1}` : ''}` };
}
