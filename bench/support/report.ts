import { execFileSync } from 'node:child_process';
import { existsSync, mkdirSync, renameSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';

import { type CaseResult, type MeasureSettings } from './measure';

export interface MachineInfo {
  readonly cpuModel: string;
  readonly cores: number;
  readonly nodeVersion: string;
  readonly v8Version: string;
  readonly platform: string;
  readonly arch: string;
  readonly totalMemoryMb: number;
  /** 1-minute load average when the run started: a busy machine makes every figure worse. */
  readonly loadAverage1m: number;
}

export function loadAverage1m(): number {
  return round(os.loadavg()[0] ?? 0);
}

export function machineInfo(): MachineInfo {
  const cpus = os.cpus();
  return {
    cpuModel: cpus[0]?.model.trim() ?? 'unknown',
    cores: cpus.length,
    nodeVersion: process.version,
    v8Version: process.versions.v8,
    platform: `${os.platform()} ${os.release()}`,
    arch: os.arch(),
    totalMemoryMb: Math.round(os.totalmem() / 2 ** 20),
    loadAverage1m: loadAverage1m(),
  };
}

/** The commit measured (HEAD when the run started), or null outside a git checkout. */
export function gitCommit(cwd: string): string | null {
  try {
    return execFileSync('git', ['rev-parse', 'HEAD'], { cwd, encoding: 'utf8', stdio: ['ignore', 'pipe', 'ignore'] }).trim();
  } catch {
    return null;
  }
}

/** The nearest directory at or above `from` holding a package.json (the repository root). */
export function findRepoRoot(from: string): string {
  let dir = path.resolve(from);
  while (!existsSync(path.join(dir, 'package.json'))) {
    const parent = path.dirname(dir);
    if (parent === dir) throw new Error(`no package.json above ${from}`);
    dir = parent;
  }
  return dir;
}

/** Four significant digits for measured figures: enough to compare runs, short enough to read a diff. */
export function round(value: number): number {
  return Number.isFinite(value) ? Number(value.toPrecision(4)) : value;
}

export interface Target {
  readonly id: string;
  readonly description: string;
  readonly metric: string;
  readonly limit: number;
  readonly actual: number;
  readonly pass: boolean;
}

export interface RunReport {
  readonly benchmark: string;
  readonly startedAt: string;
  readonly gitCommit: string | null;
  readonly machine: MachineInfo;
  /** 1-minute load average when the run ended (machine.loadAverage1m is at the start). */
  readonly loadAverage1mAtEnd: number;
  readonly settings: MeasureSettings;
  readonly cases: readonly CaseResult[];
  readonly targets: readonly Target[];
}

function pad(text: string, width: number, right: boolean): string {
  return right ? text.padStart(width) : text.padEnd(width);
}

/** A plain-text table; the first column is left-aligned, the others right-aligned. */
export function formatTable(header: readonly string[], rows: readonly (readonly string[])[]): string {
  const widths = header.map((h, i) => Math.max(h.length, ...rows.map((r) => (r[i] ?? '').length)));
  const line = (cells: readonly string[]) => cells.map((c, i) => pad(c, widths[i] as number, i > 0)).join('  ');
  return [line(header), widths.map((w) => '-'.repeat(w)).join('  '), ...rows.map(line)].join('\n');
}

export function caseRows(cases: readonly CaseResult[]): string[][] {
  const fmt = (n: number, digits: number) => n.toLocaleString('en-US', { maximumFractionDigits: digits, minimumFractionDigits: digits });
  return cases.map((c) => [
    c.id,
    fmt(c.opsPerSecond, 0),
    fmt(c.medianUs, 2),
    fmt(c.p99Us, 2),
    String(c.batchSize),
    String(c.samples),
    `${Math.round(c.cpuShare * 100)} %`,
  ]);
}

export const CASE_HEADER = ['case', 'ops/s', 'median µs', 'p99 µs', 'batch', 'samples', 'cpu share'] as const;

/**
 * Writes `<name>-<YYYY-MM-DD>.json` and `<name>-latest.json` in `dir` (a rerun on the same day
 * replaces that day's file). Each file is written to a .tmp sibling first and renamed, so an
 * interrupted run never leaves half a file (bench/results/*.tmp is git-ignored).
 */
export function writeResults(dir: string, name: string, report: { readonly startedAt: string }): string[] {
  mkdirSync(dir, { recursive: true });
  const json = `${JSON.stringify(report, (_key, value: unknown) => (typeof value === 'number' && !Number.isInteger(value) ? round(value) : value), 2)}\n`;
  const day = report.startedAt.slice(0, 10);
  return [`${name}-${day}.json`, `${name}-latest.json`].map((file) => {
    const target = path.join(dir, file);
    const tmp = `${target}.${process.pid}.tmp`;
    writeFileSync(tmp, json);
    renameSync(tmp, target);
    return target;
  });
}
