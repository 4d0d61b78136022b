import type { Client } from 'pg';

import { CHECK_LIBRARY_VERSION, type CheckRow, checksOf, planChecks } from './balance-checks';
import { AUDIT_COLUMNS, type AuditRow, CHECK_COLUMNS, auditRows } from './columns';
import { type CopyValue, copyRows } from './copy-writer';
import { Progress } from './progress';
import type { SeededRandom } from './random';
import type { World } from './world';

/*
 * The triggers' queries (the due dates kept by due_track, the audit chain's head) are planned once per
 * connection, with the statistics of the moment: planned on empty tables they scan whole tables and the
 * load slows down row by row. Fresh statistics now and then, as the tables grow, keep them on indexes.
 */
export const REFRESH_STATISTICS_AFTER = new Set([0, 2, 8, 32, 128, 512]);
const GROWING_TABLES = ['vessels', 'calibrations', 'factors', 'balance_checks', 'balances', 'due_dates', 'audit_entries'];

export async function refreshStatistics(db: Client): Promise<void> {
  await db.query(`ANALYZE ${GROWING_TABLES.join(', ')}`);
}

/** Every balance's checks, lab by lab, with the audit entries the service writes for them. */
export async function seedChecks(db: Client, world: World, total: number, rnd: SeededRandom): Promise<void> {
  const bar = new Progress('balance checks', total, 'checks');
  const r = rnd.fork('checks');
  const ids = rnd.fork('check-ids');
  for (const lab of world.labs) {
    const audit: AuditRow[] = [];
    const rows = function* (): Generator<CopyValue[]> {
      for (const balance of lab.balances) {
        for (const c of checksOf(lab, balance, r, ids) as Generator<CheckRow>) {
          audit.push(checkAudit(c));
          if (c.minimumWeightG !== null && c.passed) {
            audit.push([
              'person',
              c.performer.id,
              'set-minimum-weight',
              'balance',
              balance.id,
              lab.id,
              null,
              { minimumWeightG: c.minimumWeightG, minimumWeightDeterminedAt: c.performedAt, balanceCheckId: c.id },
              `USP <41> check ${c.id} passed: minimum weight 2000 · s`,
            ]);
          }
          if (!c.passed) {
            audit.push([
              'person',
              c.performer.id,
              'quarantine',
              'balance',
              balance.id,
              lab.id,
              { status: 'in-service', version: 1 },
              { status: 'quarantined', version: 2, balanceCheckId: c.id },
              `Quarantined: failed ${c.kind} check ${c.id}.`,
            ]);
          }
          yield [
            c.id,
            lab.id,
            balance.id,
            c.performer.id,
            c.performedAt,
            c.kind,
            c.weightId,
            c.inputs as object,
            c.results as object,
            c.minimumWeightG === null ? null : roundUp9(c.minimumWeightG),
            c.passed,
            CHECK_LIBRARY_VERSION,
            c.createdAt,
          ];
        }
      }
    };
    await copyRows(db, 'balance_checks', CHECK_COLUMNS, rows(), (n) => bar.tick(n));
    await copyRows(db, 'audit_entries', AUDIT_COLUMNS, auditRows(audit));
    if (lab === world.labs[0] || lab === world.labs[3]) await refreshStatistics(db);
  }
  bar.finish();
  // What the passing USP <41> checks left on each balance: its minimum weight.
  const withMinimum = world.labs.flatMap((l) => l.balances).filter((b) => b.minimumWeightG !== null);
  await db.query(
    `UPDATE balances b SET minimum_weight_g = m.g, minimum_weight_determined_at = m.at, version = b.version + 1
       FROM unnest($1::uuid[], $2::numeric[], $3::timestamptz[]) AS m(id, g, at) WHERE b.id = m.id`,
    [withMinimum.map((b) => b.id), withMinimum.map((b) => roundUp9(b.minimumWeightG as string)), withMinimum.map((b) => b.minimumWeightAt)],
  );
}

/** The column keeps 9 decimals; rounded up like the service does. */
function roundUp9(g: string): string {
  const [int, frac = ''] = g.split('.');
  if (frac.length <= 9) return g;
  const scaled = BigInt(`${int}${frac.slice(0, 9)}`) + (/[1-9]/.test(frac.slice(9)) ? 1n : 0n);
  const s = scaled.toString().padStart(10, '0');
  return `${s.slice(0, -9)}.${s.slice(-9)}`;
}

function checkAudit(c: CheckRow): AuditRow {
  return [
    'person',
    c.performer.id,
    'create',
    'balance-check',
    c.id,
    c.lab.id,
    null,
    {
      id: c.id,
      balanceId: c.balance.id,
      kind: c.kind,
      performedAt: c.performedAt,
      passed: c.passed,
      minimumWeightG: c.minimumWeightG,
      referenceWeightId: c.weightId,
    },
    null,
  ];
}

export { planChecks };
