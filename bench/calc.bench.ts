/**
 * Computation benchmark of libs/metrology: `npm run bench:calc`.
 *
 * Every public computation is timed on the main thread (one core) with realistic inputs given
 * as decimal strings, as they arrive from the API. The headline is one 10-replicate
 * gravimetric calibration point with its full uncertainty budget; target: median < 1 ms.
 * Results go to stdout as a table and to bench/results/calc-<date>.json and calc-latest.json.
 *
 * A missed target is printed as MISSED but the exit code stays 0: a benchmark is a report to
 * compare against earlier runs, not a gate (timings depend on the machine and its load).
 */
import path from 'node:path';

import {
  type GravimetricPointInput,
  type VolumeUncertaintyInput,
  airDensity,
  conventionalMassFromTrueMass,
  Decimal,
  evaluateGravimetricPoint,
  grubbsTest,
  lookupTolerance,
  mean,
  monteCarloVolume,
  replicateVolume,
  studentTQuantile,
  trueMassFromReading,
  usp41Repeatability,
  waterDensity,
  zFactor,
} from '@registry/metrology';

import { type CaseResult, DEFAULT_SETTINGS, measure, median, timeRuns } from './support/measure';
import {
  CASE_HEADER,
  type RunReport,
  type Target,
  caseRows,
  findRepoRoot,
  formatTable,
  gitCommit,
  loadAverage1m,
  machineInfo,
  writeResults,
} from './support/report';

// A 25 mL one-mark pipette, ten deliveries into a tared beaker on a 0.1 mg balance (invented figures).
const DELIVERIES_G = ['24.9603', '24.9587', '24.9621', '24.9598', '24.9612', '24.9579', '24.9606', '24.9594', '24.9617', '24.9590'];
const BEAKER_G = ['51.2034', '51.2031', '51.2036', '51.2029', '51.2033', '51.2035', '51.2030', '51.2032', '51.2034', '51.2031'];
const WATER_C = ['20.4', '20.5', '20.5', '20.6', '20.5', '20.4', '20.5', '20.6', '20.5', '20.5'];
const AIR_KG_PER_M3 = '1.19';
const UNCERTAINTIES = {
  balanceCalibrationG: '0.00015',
  balanceResolutionG: '0.0001',
  waterTemperatureC: '0.1',
  airDensityKgPerM3: '0.005',
  meniscusMl: '0.003',
  evaporationMl: '0.0003',
} as const;

const POINT: GravimetricPointInput = {
  nominalVolumeMl: '25',
  replicates: DELIVERIES_G.map((delivered, i) => {
    const before = BEAKER_G[i] as string;
    return {
      readings: { mode: 'deliver' as const, beforeG: before, afterG: new Decimal(before).plus(delivered).toString() },
      waterTemperatureC: WATER_C[i] as string,
    };
  }),
  air: { airDensityKgPerM3: AIR_KG_PER_M3 },
  material: 'borosilicate-3-3',
  uncertainties: UNCERTAINTIES,
  // ISO 648 class B, 25 mL (the library's table, transcribed from memory).
  acceptance: { limitMl: '0.060' },
};

const REPEATABILITY_READINGS_G = [
  '100.0002',
  '100.0001',
  '100.0003',
  '100.0002',
  '100.0000',
  '100.0002',
  '100.0001',
  '100.0003',
  '100.0002',
  '100.0001',
];
const CONDITIONS = { temperatureC: '21.3', pressurePa: '100840', relativeHumidityPercent: '43' } as const;

const HEADLINE = 'gravimetric-point-10';
const HEADLINE_TARGET_US = 1000;
const MC_TRIALS = 100_000;
const MC_RUNS = 5;
// monte-carlo.ts promises "10^5 draws take well under a second": checked, for information.
const MC_TARGET_MS = 1000;
/** Below this share of a core while sampling, a case's figures are flagged as taken on a busy machine. */
const BUSY_CPU_SHARE = 0.9;

const CASES: readonly (readonly [string, string, () => unknown])[] = [
  ['water-density', 'Tanaka 2001, 20.5 °C', () => waterDensity({ temperatureC: '20.5' })],
  ['air-density-cipm-2007', 'CIPM-2007, 21.3 °C, 100 840 Pa, 43 %', () => airDensity(CONDITIONS)],
  ['air-density-oiml', 'OIML R 111 simplified, same conditions', () => airDensity({ ...CONDITIONS, method: 'oiml-r111' })],
  [
    'z-factor',
    'Z at 20.5 °C, 1.19 kg/m3 (water density included)',
    () => zFactor({ waterTemperatureC: '20.5', airDensityKgPerM3: '1.19' }),
  ],
  [
    'replicate-volume',
    'one delivery, borosilicate 3.3',
    () =>
      replicateVolume({
        readings: { mode: 'deliver', beforeG: '51.2034', afterG: '76.1637' },
        waterTemperatureC: '20.5',
        airDensityKgPerM3: AIR_KG_PER_M3,
        material: 'borosilicate-3-3',
      }),
  ],
  [
    'buoyancy-true-mass',
    'true mass of water from a reading',
    () => trueMassFromReading({ readingG: '24.9603', objectDensityKgPerM3: '998.1', airDensityKgPerM3: AIR_KG_PER_M3 }),
  ],
  ['conventional-mass', 'steel weight, 7950 kg/m3', () => conventionalMassFromTrueMass({ massG: '100.00012', densityKgPerM3: '7950' })],
  ['grubbs-10', "Grubbs' test on 10 values", () => grubbsTest(DELIVERIES_G)],
  ['student-t-quantile', 't(0.975, 9)', () => studentTQuantile('0.975', 9)],
  [
    'usp41-repeatability-10',
    'USP <41> repeatability, 10 readings',
    () => usp41Repeatability({ readingsG: REPEATABILITY_READINGS_G, testWeightG: '100', readabilityG: '0.0001' }),
  ],
  [
    'tolerance-lookup',
    'ISO one-mark pipette, class A, 25 mL',
    () => lookupTolerance({ kind: 'one-mark-pipette', accuracyClass: 'A', nominalVolumeMl: '25' }),
  ],
  [HEADLINE, '10-replicate gravimetric point with full uncertainty budget', () => evaluateGravimetricPoint(POINT)],
];

interface CalcReport extends RunReport {
  readonly headlinePoint: { readonly meanVolumeMl: string; readonly expandedUncertaintyMl: string; readonly coverageFactor: string };
  readonly monteCarlo: {
    readonly trials: number;
    readonly runsMs: readonly number[];
    readonly medianMs: number;
    readonly drawsPerSecond: number;
  };
}

/** The same budget inputs evaluateGravimetricPoint builds, for the Monte Carlo cross-check. */
function monteCarloInput(): VolumeUncertaintyInput {
  const r = evaluateGravimetricPoint(POINT);
  const meanTemperature = mean(r.replicates.map((x) => x.waterTemperatureC));
  return {
    model: {
      netMassG: mean(r.replicates.map((x) => x.netMassG)),
      waterTemperatureC: meanTemperature,
      waterDensityKgPerM3: waterDensity({ temperatureC: meanTemperature }).densityKgPerM3,
      airDensityKgPerM3: r.airDensityKgPerM3,
      weightDensityKgPerM3: new Decimal(8000),
      expansionCoefficientPerK: r.expansionCoefficientPerK,
      referenceTemperatureC: new Decimal(20),
    },
    replicateVolumesMl: r.replicates.map((x) => x.volumeMl),
    uncertainties: UNCERTAINTIES,
  };
}

function main(): void {
  const startedAt = new Date().toISOString();
  const root = findRepoRoot(__dirname);
  const machine = machineInfo();
  console.log(`calc benchmark: ${machine.cpuModel}, ${machine.cores} cores (one used), node ${machine.nodeVersion}`);
  console.log(`warm-up ${DEFAULT_SETTINGS.warmupMs} ms, then ${DEFAULT_SETTINGS.durationMs} ms of samples per case\n`);

  const point = evaluateGravimetricPoint(POINT);
  const u = point.uncertainty;
  const headlinePoint = {
    meanVolumeMl: point.meanVolumeMl.toSignificantDigits(7).toString(),
    expandedUncertaintyMl: u.expandedUncertaintyMl.toSignificantDigits(3).toString(),
    coverageFactor: u.coverageFactor.toString(),
  };
  console.log(
    `headline inputs give V = ${headlinePoint.meanVolumeMl} mL, U = ${headlinePoint.expandedUncertaintyMl} mL (k = ${headlinePoint.coverageFactor}), verdict ${point.verdict?.verdict ?? 'none'}\n`,
  );

  const cases: CaseResult[] = [];
  for (const [id, description, fn] of CASES) {
    const result = measure(id, description, fn);
    cases.push(result);
    console.log(`  ${id}: median ${result.medianUs.toFixed(2)} µs`);
  }

  const mcInput = monteCarloInput();
  const runsMs = timeRuns(() => monteCarloVolume(mcInput, { trials: MC_TRIALS }), MC_RUNS);
  const mcMedianMs = median(runsMs);

  const headline = cases.find((c) => c.id === HEADLINE) as CaseResult;
  const targets: Target[] = [
    {
      id: 'headline',
      description: `${HEADLINE}: median < ${HEADLINE_TARGET_US} µs`,
      metric: 'medianUs',
      limit: HEADLINE_TARGET_US,
      actual: headline.medianUs,
      pass: headline.medianUs < HEADLINE_TARGET_US,
    },
    {
      id: 'monte-carlo-1e5',
      description: `monteCarloVolume, ${MC_TRIALS} draws: median < ${MC_TARGET_MS} ms (informational)`,
      metric: 'medianMs',
      limit: MC_TARGET_MS,
      actual: mcMedianMs,
      pass: mcMedianMs < MC_TARGET_MS,
    },
  ];

  console.log(`\n${formatTable(CASE_HEADER, caseRows(cases))}\n`);
  console.log(`monte-carlo-1e5: median ${mcMedianMs.toFixed(1)} ms over ${MC_RUNS} runs (${runsMs.map((t) => t.toFixed(1)).join(', ')})\n`);
  const busy = cases.filter((c) => c.cpuShare < BUSY_CPU_SHARE).map((c) => c.id);
  if (busy.length > 0) {
    const which = busy.length === cases.length ? 'every case' : busy.join(', ');
    console.log(`busy machine: under ${BUSY_CPU_SHARE * 100} % of a core for ${which}; those times are inflated\n`);
  }
  for (const t of targets) {
    const actual = t.metric === 'medianUs' ? `${t.actual.toFixed(1)} µs` : `${t.actual.toFixed(1)} ms`;
    console.log(`${t.pass ? 'PASS  ' : 'MISSED'}  ${t.description}: ${actual}`);
  }

  const report: CalcReport = {
    benchmark: 'calc',
    startedAt,
    gitCommit: gitCommit(root),
    machine,
    loadAverage1mAtEnd: loadAverage1m(),
    settings: DEFAULT_SETTINGS,
    cases,
    headlinePoint,
    monteCarlo: { trials: MC_TRIALS, runsMs, medianMs: mcMedianMs, drawsPerSecond: MC_TRIALS / (mcMedianMs / 1000) },
    targets,
  };
  const files = writeResults(path.join(root, 'bench', 'results'), 'calc', report);
  console.log(`\nwrote ${files.map((f) => path.relative(root, f)).join(' and ')}`);
  // Exit code 0 even when a target is MISSED: see the note at the top of this file.
}

main();
