import type { DemoLabCode } from './scenario';
import { DemoRandom } from './random';

/*
 * The demo's year as a plan: which calibration happens on which day, by whom,
 * and how it ends. Days count from the first day of the history (day 0, a year
 * before the load) to the day before the load (day HISTORY_DAYS - 1).
 */

export const HISTORY_DAYS = 365;

export const ANALYSTS: Readonly<Record<DemoLabCode, readonly string[]>> = {
  'DW-CHEM': ['tomasz.wrobel', 'lena.hartmann', 'yusuf.demir'],
  'WW-LAB': ['pablo.reyes', 'mei.lin'],
  TEACH: ['sophie.adler', 'mei.lin'],
};
export const MANAGERS: Readonly<Record<DemoLabCode, string>> = {
  'DW-CHEM': 'amara.osei',
  'WW-LAB': 'ingrid.solberg',
  TEACH: 'daniel.brook',
};
export const emailOf = (handle: string) => `${handle}@waterworks.example`;

/** How a calibration ends in the demo. */
export type Ending =
  | { kind: 'approved' }
  /** Approved by the lab manager on the day it was submitted, two hours later. */
  | { kind: 'approved-same-day' }
  | { kind: 'returned'; note: string }
  | { kind: 'submitted' }
  | { kind: 'draft' }
  | { kind: 'voided-draft'; reason: string }
  | { kind: 'voided-after-approval'; afterDays: number; reason: string };

export interface PlannedCalibration {
  readonly day: number;
  /** Hour of the day, UTC. */
  readonly hour: number;
  readonly lab: DemoLabCode;
  readonly vesselTag: string;
  readonly performer: string;
  /** Systematic error as a multiple of the vessel's limit: beyond ±1 fails. */
  readonly biasOfLimit: number;
  readonly ending: Ending;
  readonly notes?: string;
}

/** Work one person does with their own technique, so each analyst has factors of their own. */
const PERSONAL = new Set(['one-mark-pipette', 'graduated-pipette', 'burette', 'piston-pipette-fixed', 'piston-pipette-variable']);

/** Vessels whose year the plan writes by hand (failures, returns, voids, the open work at the end). */
export const SCRIPTED: readonly PlannedCalibration[] = [
  // A flask that delivers too little volume for its class: approved as failed, the vessel goes into quarantine.
  {
    day: 270,
    hour: 9,
    lab: 'DW-CHEM',
    vesselTag: 'DW-VF-100-007',
    performer: 'yusuf.demir',
    biasOfLimit: 1.9,
    ending: { kind: 'approved' },
  },
  // A teaching pipette: a first pass, later a failure that also marks Sophie's factor for review.
  { day: 40, hour: 9, lab: 'TEACH', vesselTag: 'T-PIP-25-003', performer: 'sophie.adler', biasOfLimit: 0.3, ending: { kind: 'approved' } },
  { day: 245, hour: 10, lab: 'TEACH', vesselTag: 'T-PIP-25-003', performer: 'mei.lin', biasOfLimit: -1.7, ending: { kind: 'approved' } },
  // Made on WW-LAB's balance the morning before it failed its afternoon check (see BALANCE_FAILURE).
  {
    day: 235,
    hour: 9,
    lab: 'WW-LAB',
    vesselTag: 'WW-PIP-10-001',
    performer: 'pablo.reyes',
    biasOfLimit: 0.2,
    ending: { kind: 'approved-same-day' },
  },
  // Voided after approval: the factor is withdrawn; the run is repeated the next day.
  {
    day: 200,
    hour: 10,
    lab: 'WW-LAB',
    vesselTag: 'WW-PIP-20-002',
    performer: 'mei.lin',
    biasOfLimit: 0.25,
    ending: {
      kind: 'voided-after-approval',
      afterDays: 6,
      reason: 'The balance printout shows another tare than the one entered; repeated.',
    },
  },
  { day: 207, hour: 9, lab: 'WW-LAB', vesselTag: 'WW-PIP-20-002', performer: 'mei.lin', biasOfLimit: 0.2, ending: { kind: 'approved' } },
  // Entered against the wrong vessel, voided by its performer the same day.
  {
    day: 322,
    hour: 11,
    lab: 'DW-CHEM',
    vesselTag: 'DW-PIP-25-005',
    performer: 'lena.hartmann',
    biasOfLimit: 0.1,
    ending: { kind: 'voided-draft', reason: 'Entered against the wrong pipette (it was DW-PIP-25-004).' },
  },
  // The open work on the day of the load.
  {
    day: 358,
    hour: 10,
    lab: 'DW-CHEM',
    vesselTag: 'DW-BUR-50-001',
    performer: 'lena.hartmann',
    biasOfLimit: 0.3,
    ending: {
      kind: 'returned',
      note: 'The air pressure entered is the weather service’s sea-level value; enter the barometer reading at the balance.',
    },
  },
  { day: 362, hour: 10, lab: 'WW-LAB', vesselTag: 'WW-VF-100-001', performer: 'mei.lin', biasOfLimit: -0.2, ending: { kind: 'submitted' } },
  {
    day: 363,
    hour: 9,
    lab: 'DW-CHEM',
    vesselTag: 'DW-PIP-20-003',
    performer: 'tomasz.wrobel',
    biasOfLimit: 0.15,
    ending: { kind: 'submitted' },
  },
  { day: 363, hour: 11, lab: 'DW-CHEM', vesselTag: 'DW-VF-50-001', performer: 'yusuf.demir', biasOfLimit: 0.1, ending: { kind: 'draft' } },
  { day: 364, hour: 9, lab: 'WW-LAB', vesselTag: 'WW-BUR-50-003', performer: 'pablo.reyes', biasOfLimit: -0.1, ending: { kind: 'draft' } },
];

/** Vessels whose whole year is in SCRIPTED: the two that fail (the others also have a routine year). */
const SCRIPTED_ONLY = ['DW-VF-100-007', 'T-PIP-25-003'] as const;

/** The WW-LAB balance fails its afternoon quick check on this day and passes the next morning. */
export const BALANCE_FAILURE = { day: 235, hour: 13, balanceTag: 'BAL-03', offsetG: 0.012 } as const;

/** USP <41> checks of the analytical balances, once a quarter. */
export const USP41_DAYS = [14, 105, 196, 287] as const;

export interface PlannableVessel {
  readonly lab: DemoLabCode;
  readonly tag: string;
  readonly kind: string;
}

/**
 * The routine year: each vessel a first calibration in the first months (the
 * lab's analysts in turn), personal ware also by a second analyst, and about
 * half of them again some six months later (the new factor supersedes the
 * first). The vessels that fail get only their scripted runs.
 */
export function planYear(vessels: readonly PlannableVessel[], seed: number): PlannedCalibration[] {
  const rnd = new DemoRandom(seed);
  const scripted = new Set<string>(SCRIPTED_ONLY);
  const plan: PlannedCalibration[] = [...SCRIPTED];
  const routine = (lab: DemoLabCode, vesselTag: string, performer: string, day: number): PlannedCalibration => ({
    day,
    hour: rnd.int(8, 11),
    lab,
    vesselTag,
    performer,
    biasOfLimit: rnd.normal(0, 0.25),
    ending: { kind: 'approved' },
  });
  const index: Partial<Record<DemoLabCode, number>> = {};
  for (const v of vessels) {
    if (scripted.has(v.tag)) continue;
    const analysts = ANALYSTS[v.lab];
    const i = (index[v.lab] = (index[v.lab] ?? -1) + 1);
    const first = analysts[i % analysts.length] as string;
    const day = rnd.int(3, 150);
    plan.push(routine(v.lab, v.tag, first, day));
    if (PERSONAL.has(v.kind)) plan.push(routine(v.lab, v.tag, analysts[(i + 1) % analysts.length] as string, day + rnd.int(5, 60)));
    if (rnd.next() < 0.5) plan.push(routine(v.lab, v.tag, first, day + rnd.int(150, 200)));
  }
  return plan.sort((a, b) => a.day - b.day || a.hour - b.hour);
}
