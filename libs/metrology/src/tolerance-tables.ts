import { Decimal } from './decimal';

/**
 * Maximum permissible errors (MPE, "tolerances") of volumetric ware, by standard.
 *
 * Every table names its standard, edition and table/clause. `verification`
 * says, per accuracy class, whether the numbers were checked against a
 * published copy during development (`checked`, with `checkedAgainst`) or are
 * transcribed from memory of the standard (`from-memory`) and must be checked
 * against the standard before a laboratory relies on them. A row flagged
 * `fromMemory` is from memory even inside a checked table (ISO 385 and
 * ISO 8655-2 have only one checked row each).
 *
 * Values are ± mL at the nominal volume, as decimal strings. Sizes that are not
 * in a table have no limit here: nothing is interpolated.
 */

export type VesselKind =
  | 'volumetric-flask'
  | 'one-mark-pipette'
  | 'graduated-pipette'
  | 'burette'
  | 'graduated-cylinder'
  | 'piston-pipette-fixed'
  | 'piston-pipette-variable'
  | 'other';

export const VESSEL_KINDS: readonly VesselKind[] = [
  'volumetric-flask',
  'one-mark-pipette',
  'graduated-pipette',
  'burette',
  'graduated-cylinder',
  'piston-pipette-fixed',
  'piston-pipette-variable',
  'other',
];

export type AccuracyClass = 'A' | 'AS' | 'B' | 'none';
export const ACCURACY_CLASSES: readonly AccuracyClass[] = ['A', 'AS', 'B', 'none'];

export type StandardFamily = 'ISO' | 'ASTM' | 'USP';
export type Verification = 'checked' | 'from-memory';

type ByClass = Readonly<Partial<Record<AccuracyClass, string>>>;

export interface ToleranceRow {
  readonly nominalMl: string;
  /** Systematic (or overall) MPE, ± mL, by class. */
  readonly limitMl: ByClass;
  /** Random-error limit (a standard deviation), mL, by class — piston pipettes only. */
  readonly randomLimitMl?: ByClass;
  readonly fromMemory?: true;
}

export interface ToleranceTable {
  readonly id: string;
  readonly family: StandardFamily;
  readonly standard: string;
  readonly table: string;
  readonly title: string;
  readonly kinds: readonly VesselKind[];
  readonly classes: readonly AccuracyClass[];
  readonly verification: Readonly<Partial<Record<AccuracyClass, Verification>>>;
  readonly checkedAgainst?: string;
  readonly note?: string;
  readonly rows: readonly ToleranceRow[];
}

/** Rows where class A and AS share one limit (ISO: AS differs from A only in delivery time). */
const aAsB = (nominalMl: string, a: string, b: string, fromMemory?: true): ToleranceRow => ({
  nominalMl,
  limitMl: { A: a, AS: a, B: b },
  ...(fromMemory ? { fromMemory } : {}),
});
const aB = (nominalMl: string, a: string, b: string, fromMemory?: true): ToleranceRow => ({
  nominalMl,
  limitMl: { A: a, B: b },
  ...(fromMemory ? { fromMemory } : {}),
});

/** ISO 8655-2 rows are published in µL; stored here in mL. */
const ul = (v: string): string => new Decimal(v).div(1000).toFixed();
const piston = (nominalUl: string, systematicUl: string, randomUl: string, fromMemory?: true): ToleranceRow => ({
  nominalMl: ul(nominalUl),
  limitMl: { none: ul(systematicUl) },
  randomLimitMl: { none: ul(randomUl) },
  ...(fromMemory ? { fromMemory } : {}),
});

export const TOLERANCE_TABLES: readonly ToleranceTable[] = [
  {
    id: 'iso-1042-1998',
    family: 'ISO',
    standard: 'ISO 1042:1998',
    table: 'Table 1 (limits of volumetric error)',
    title: 'One-mark volumetric flasks',
    kinds: ['volumetric-flask'],
    classes: ['A', 'B'],
    verification: { A: 'checked', B: 'from-memory' },
    checkedAgainst:
      'Class A: identical limits in the German Eichordnung, Anlage 12 "Volumenmessgeräte für Laboratoriumszwecke", 3.2 (Messkolben), umwelt-online copy. Class B: from memory (twice class A).',
    rows: [
      aB('1', '0.025', '0.05'),
      aB('2', '0.025', '0.05'),
      aB('5', '0.025', '0.05'),
      aB('10', '0.025', '0.05'),
      aB('20', '0.04', '0.08'),
      aB('25', '0.04', '0.08'),
      aB('50', '0.06', '0.12'),
      aB('100', '0.10', '0.20'),
      aB('200', '0.15', '0.30'),
      aB('250', '0.15', '0.30'),
      aB('500', '0.25', '0.50'),
      aB('1000', '0.4', '0.8'),
      aB('2000', '0.6', '1.2'),
      aB('5000', '1.2', '2.4'),
    ],
  },
  {
    id: 'iso-648-2008',
    family: 'ISO',
    standard: 'ISO 648:2008',
    table: 'Table 1 (maximum permissible errors)',
    title: 'Single-volume (one-mark) pipettes',
    kinds: ['one-mark-pipette'],
    classes: ['A', 'AS', 'B'],
    verification: { A: 'from-memory', AS: 'from-memory', B: 'from-memory' },
    note: 'From memory: check every row against ISO 648:2008 before relying on it.',
    rows: [
      aAsB('0.5', '0.005', '0.010'),
      aAsB('1', '0.008', '0.015'),
      aAsB('2', '0.010', '0.020'),
      aAsB('5', '0.015', '0.030'),
      aAsB('10', '0.020', '0.040'),
      aAsB('20', '0.030', '0.060'),
      aAsB('25', '0.030', '0.060'),
      aAsB('50', '0.050', '0.100'),
      aAsB('100', '0.080', '0.150'),
      aAsB('200', '0.100', '0.200'),
    ],
  },
  {
    id: 'iso-835-2007',
    family: 'ISO',
    standard: 'ISO 835:2007',
    table: 'Table 1 (maximum permissible errors)',
    title: 'Graduated pipettes',
    kinds: ['graduated-pipette'],
    classes: ['A', 'AS', 'B'],
    verification: { A: 'from-memory', AS: 'from-memory', B: 'from-memory' },
    note: 'From memory: check against ISO 835:2007. The MPE applies at any graduation and to the difference between any two.',
    rows: [
      aAsB('1', '0.006', '0.010'),
      aAsB('2', '0.010', '0.020'),
      aAsB('5', '0.030', '0.050'),
      aAsB('10', '0.050', '0.100'),
      aAsB('25', '0.100', '0.200'),
    ],
  },
  {
    id: 'iso-385-2005',
    family: 'ISO',
    standard: 'ISO 385:2005',
    table: 'Table 1 (maximum permissible errors)',
    title: 'Burettes',
    kinds: ['burette'],
    classes: ['A', 'AS', 'B'],
    verification: { A: 'checked', AS: 'checked', B: 'checked' },
    checkedAgainst:
      '50 mL row only (A/AS ±0.05, B ±0.10): niito.kz "Burette accuracy: Class A vs Class B" (a supplier page citing ISO 385).',
    note: 'The MPE applies at any point of the scale and to the difference between any two points.',
    rows: [
      aAsB('10', '0.02', '0.05', true),
      aAsB('25', '0.03', '0.05', true),
      aAsB('50', '0.05', '0.10'),
      aAsB('100', '0.10', '0.20', true),
    ],
  },
  {
    id: 'iso-4788-2005',
    family: 'ISO',
    standard: 'ISO 4788:2005',
    table: 'Table 1 (maximum permissible errors)',
    title: 'Graduated measuring cylinders',
    kinds: ['graduated-cylinder'],
    classes: ['A', 'B'],
    verification: { A: 'from-memory', B: 'from-memory' },
    note: 'From memory (class A ≈ half the smallest scale division). ISO 4788 clause 7 (checked, lateststandardsdownload.com excerpt): the errors are the MPE at any point on the scale and the maximum difference between the errors at any two points.',
    rows: [
      aB('5', '0.05', '0.1'),
      aB('10', '0.1', '0.2'),
      aB('25', '0.25', '0.5'),
      aB('50', '0.5', '1.0'),
      aB('100', '0.5', '1.0'),
      aB('250', '1.0', '2.0'),
      aB('500', '2.5', '5.0'),
      aB('1000', '5.0', '10.0'),
      aB('2000', '10', '20'),
    ],
  },
  {
    id: 'iso-8655-2-2002',
    family: 'ISO',
    standard: 'ISO 8655-2:2002',
    table: 'Table 1 (maximum permissible errors, air-displacement pipettes)',
    title: 'Piston pipettes, fixed and variable volume',
    kinds: ['piston-pipette-fixed', 'piston-pipette-variable'],
    classes: ['none'],
    verification: { none: 'checked' },
    checkedAgainst:
      '1000 µL row (±8 µL systematic, 3 µL random) and the rule that a variable pipette keeps the µL limits of its nominal volume at every selected volume (8 µL / 3 µL at 200 and 500 µL): TSI Journals 2019, "Calibration of micropipettes through gravimetric solution", Table 2.',
    note: 'Limits are those of the nominal volume; for a variable pipette the same µL limits apply at every selected volume. ISO 8655-2:2022 revised these limits: confirm the edition the laboratory works to.',
    rows: [
      piston('1', '0.05', '0.05', true),
      piston('2', '0.08', '0.04', true),
      piston('5', '0.125', '0.075', true),
      piston('10', '0.12', '0.08', true),
      piston('20', '0.2', '0.1', true),
      piston('50', '0.5', '0.2', true),
      piston('100', '0.8', '0.3', true),
      piston('200', '1.6', '0.6', true),
      piston('500', '4.0', '1.5', true),
      piston('1000', '8.0', '3.0'),
      piston('2000', '16', '6.0', true),
      piston('5000', '40', '15', true),
      piston('10000', '60', '30', true),
    ],
  },
  {
    id: 'astm-e288',
    family: 'ASTM',
    standard: 'ASTM E288',
    table: 'Table 1 (capacity tolerances)',
    title: 'Laboratory glass volumetric flasks',
    kinds: ['volumetric-flask'],
    classes: ['A', 'B'],
    verification: { A: 'checked', B: 'checked' },
    checkedAgainst:
      'Class A 25–1000 mL: socratic.org "How accurate is a volumetric flask" (class A table; it gives 0.15 mL at 500 mL). Class B = twice class A: ASTM E288 scope 1.1.2 (astm.org, E288-03 and E288-06 abstracts).',
    rows: [
      aB('10', '0.02', '0.04', true),
      aB('25', '0.03', '0.06'),
      aB('50', '0.05', '0.10'),
      aB('100', '0.08', '0.16'),
      aB('250', '0.12', '0.24'),
      aB('500', '0.15', '0.30'),
      aB('1000', '0.30', '0.60'),
      aB('2000', '0.50', '1.00', true),
    ],
  },
  {
    id: 'astm-e969',
    family: 'ASTM',
    standard: 'ASTM E969',
    table: 'Table 1 (capacity tolerances)',
    title: 'Glass volumetric (transfer) pipets',
    kinds: ['one-mark-pipette'],
    classes: ['A', 'B'],
    verification: { A: 'checked', B: 'checked' },
    checkedAgainst: 'R. B. Thompson, Illustrated Guide to Home Chemistry Experiments, Table 3-1 (pipette columns, class A and B).',
    rows: [
      aB('1', '0.006', '0.012'),
      aB('2', '0.006', '0.012', true),
      aB('5', '0.01', '0.02'),
      aB('10', '0.02', '0.04'),
      aB('25', '0.03', '0.06'),
      aB('50', '0.05', '0.10'),
      aB('100', '0.08', '0.16'),
    ],
  },
  {
    id: 'astm-e287',
    family: 'ASTM',
    standard: 'ASTM E287',
    table: 'Table 1 (volumetric tolerances)',
    title: 'Laboratory glass graduated burets',
    kinds: ['burette'],
    classes: ['A', 'B'],
    verification: { A: 'from-memory', B: 'from-memory' },
    checkedAgainst: 'Only the rule class B = twice class A: ASTM E287 scope 1.1.2 (aenor.com, E287-02(2019) abstract).',
    rows: [aB('10', '0.02', '0.04'), aB('25', '0.03', '0.06'), aB('50', '0.05', '0.10'), aB('100', '0.10', '0.20')],
  },
  {
    id: 'astm-e1272-02',
    family: 'ASTM',
    standard: 'ASTM E1272-02(2012)',
    table: 'Table 1 (dimensions and tolerances, to contain or to deliver)',
    title: 'Laboratory glass graduated cylinders',
    kinds: ['graduated-cylinder'],
    classes: ['A', 'B'],
    verification: { A: 'checked', B: 'checked' },
    checkedAgainst: 'ASTM E1272-02(2012) Table 1, normservis.cz copy (the 1000 mL row was cut off there and is left out).',
    rows: [
      aB('5', '0.05', '0.10'),
      aB('10', '0.10', '0.20'),
      aB('25', '0.17', '0.34'),
      aB('50', '0.25', '0.50'),
      aB('100', '0.50', '1.00'),
      aB('250', '1.00', '2.00'),
      aB('500', '2.00', '4.00'),
    ],
  },
  {
    id: 'usp-31-graduated-pipets',
    family: 'USP',
    standard: 'USP general chapter <31> Volumetric apparatus (USP 29)',
    table: 'Standards of accuracy, text',
    title: 'Measuring (graduated) pipets up to 10 mL',
    kinds: ['graduated-pipette'],
    classes: ['A'],
    verification: { A: 'checked' },
    checkedAgainst: 'USP 29 <31> text (uspbpep.com copy): "10, 20, and 30 µL for the 2-, 5-, and 10-mL sizes".',
    rows: [
      { nominalMl: '2', limitMl: { A: '0.010' } },
      { nominalMl: '5', limitMl: { A: '0.020' } },
      { nominalMl: '10', limitMl: { A: '0.030' } },
    ],
  },
];
