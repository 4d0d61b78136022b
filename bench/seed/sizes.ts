/** How much of everything each size generates. Calibrations and checks are totals over the history. */
export interface SeedSize {
  readonly labs: number;
  readonly people: number;
  readonly vessels: number;
  readonly calibrations: number;
  readonly balanceChecks: number;
  readonly balancesPerLab: number;
  /** Years of history behind the as-of date. */
  readonly historyYears: number;
}

export const SIZES = {
  // For tests: a few of everything, every state and kind still present.
  XS: { labs: 2, people: 12, vessels: 60, calibrations: 600, balanceChecks: 400, balancesPerLab: 8, historyYears: 2 },
  S: { labs: 3, people: 40, vessels: 1_000, calibrations: 10_000, balanceChecks: 4_000, balancesPerLab: 8, historyYears: 4 },
  M: { labs: 30, people: 500, vessels: 100_000, calibrations: 1_000_000, balanceChecks: 200_000, balancesPerLab: 8, historyYears: 4 },
  L: {
    labs: 300,
    people: 5_000,
    vessels: 1_000_000,
    calibrations: 10_000_000,
    balanceChecks: 2_000_000,
    balancesPerLab: 8,
    historyYears: 4,
  },
} as const satisfies Record<string, SeedSize>;

export type SizeName = keyof typeof SIZES;
export const SIZE_NAMES = Object.keys(SIZES) as SizeName[];
