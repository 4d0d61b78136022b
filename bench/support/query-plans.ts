/**
 * Query plans of the statements the service really sends. `recordQueries` wraps pg's
 * Client.prototype.query (the driver under Prisma's adapter and the raw SQL) in this process and
 * keeps every read statement — text and parameters — under the label of the request being made;
 * `explain` asks PostgreSQL for each one's plan with the same parameters; `tableScans` finds the
 * scans of a large table that read it whole.
 *
 * Two ways to use it (bench/plans.ts and tests/plans/query-plans.spec.ts):
 *   - on a registry of realistic size (`npm run bench:seed -- --size M`), with the planner's own
 *     choices: a whole-table scan there is what production would do;
 *   - on a small test database with `enable_seqscan = off`: the planner then takes an index
 *     whenever one can serve the statement, so a sequential scan that remains means no index
 *     can — whatever the data's size.
 */
import { Client } from 'pg';

/**
 * The tables that grow with the registry (items, their history, the trail): a whole-table read
 * of one of them in a request is a cost that grows with every lab. Labs, people, policies and
 * instruments stay in the hundreds.
 */
export const LARGE_TABLES: ReadonlySet<string> = new Set([
  'audit_entries',
  'balance_checks',
  'calibrations',
  'due_dates',
  'exports',
  'factors',
  'idempotency_keys',
  'interval_changes',
  'notice_deliveries',
  'notice_recipients',
  'notices',
  'sessions',
  'sign_in_failures',
  'subject_intervals',
  'vessels',
]);

export interface RecordedQuery {
  /** The request during which the statement ran. */
  readonly label: string;
  readonly text: string;
  readonly values: readonly unknown[];
}

interface QueryConfigLike {
  text?: unknown;
  values?: unknown;
}

const READ = /^\s*(?:SELECT|WITH)\b/i;

/** Records the read statements this process sends through pg while a label is set. */
export function recordQueries(client: typeof Client = Client) {
  const proto = client.prototype as unknown as { query: (...args: unknown[]) => unknown };
  const original = proto.query;
  const recorded: RecordedQuery[] = [];
  let label: string | null = null;
  proto.query = function (this: unknown, ...args: unknown[]) {
    const [config, values] = args;
    const text = typeof config === 'string' ? config : (config as QueryConfigLike | null)?.text;
    if (label !== null && typeof text === 'string' && READ.test(text)) {
      const params = typeof config === 'object' && config !== null ? (config as QueryConfigLike).values : values;
      recorded.push({ label, text, values: Array.isArray(params) ? [...(params as unknown[])] : [] });
    }
    return original.apply(this, args);
  };
  return {
    recorded,
    /** Statements sent from now on belong to `next` (null: not recorded). */
    label(next: string | null): void {
      label = next;
    },
    restore(): void {
      proto.query = original;
    },
  };
}

/** A plan node as EXPLAIN (FORMAT JSON) writes it. */
export interface PlanNode {
  readonly 'Node Type': string;
  readonly 'Relation Name'?: string;
  readonly 'Index Name'?: string;
  readonly 'Index Cond'?: string;
  readonly Filter?: string;
  readonly 'Plan Rows'?: number;
  readonly Plans?: readonly PlanNode[];
}

/** The plan of one statement with its parameters (the custom plan a first execution gets). */
export async function explain(db: Client, query: Pick<RecordedQuery, 'text' | 'values'>): Promise<PlanNode> {
  const { rows } = await db.query<{ 'QUERY PLAN': { Plan: PlanNode }[] }>({
    text: `EXPLAIN (FORMAT JSON) ${query.text}`,
    values: query.values as unknown[],
  });
  const plan = rows[0]?.['QUERY PLAN'][0]?.Plan;
  if (!plan) throw new Error(`no plan for ${query.text.slice(0, 120)}`);
  return plan;
}

/** Plan nodes that consume their whole input before returning a row. */
const READS_ALL_INPUT: ReadonlySet<string> = new Set(['Sort', 'Hash', 'Aggregate', 'SetOp', 'Materialize', 'WindowAgg']);

export interface TableScan {
  readonly table: string;
  /** `Seq Scan`, or `Index Scan` / `Index Only Scan` without a condition (the whole index in order). */
  readonly node: string;
  readonly index?: string;
  readonly filter?: string;
}

/**
 * Scans that read a large table whole: a sequential scan, or an index scan with no index
 * condition that is not cut short by a Limit above it (walking an index in order to stop after a
 * page is how a sorted, unfiltered page should be read).
 */
export function tableScans(plan: PlanNode, large: ReadonlySet<string> = LARGE_TABLES): TableScan[] {
  // (`large` may be narrowed by the caller, e.g. to the tables that hold many rows now.)
  const found: TableScan[] = [];
  const walk = (node: PlanNode, underLimit: boolean) => {
    const table = node['Relation Name'];
    const type = node['Node Type'];
    if (table && large.has(table)) {
      const wholeIndex = (type === 'Index Scan' || type === 'Index Only Scan') && !node['Index Cond'] && !underLimit;
      if (type === 'Seq Scan' || wholeIndex) {
        found.push({
          table,
          node: type,
          ...(node['Index Name'] ? { index: node['Index Name'] } : {}),
          ...(node.Filter ? { filter: node.Filter } : {}),
        });
      }
    }
    // A Limit stops the scans below it early unless a node in between reads all its input first.
    const limited = type === 'Limit' || (underLimit && !READS_ALL_INPUT.has(type));
    for (const child of node.Plans ?? []) walk(child, limited);
  };
  walk(plan, false);
  return found;
}

/**
 * The large tables that hold at least `minRows` rows by the planner's statistics: on a real
 * registry, a table still (nearly) empty is rightly read whole; its indexes are checked by the
 * test on a small database with sequential scans off.
 */
export async function populatedLargeTables(db: Client, minRows = 10_000): Promise<Set<string>> {
  const { rows } = await db.query<{ relname: string }>(
    `SELECT relname FROM pg_class WHERE relkind = 'r' AND relnamespace = 'public'::regnamespace AND reltuples >= $1 AND relname = ANY($2::text[])`,
    [minRows, [...LARGE_TABLES]],
  );
  return new Set(rows.map((r) => r.relname));
}

/** The plan as indented one-line nodes, for reports and failure messages. */
export function planOutline(plan: PlanNode): string[] {
  const lines: string[] = [];
  const walk = (node: PlanNode, depth: number) => {
    const on = node['Relation Name'] ? ` on ${node['Relation Name']}` : '';
    const using = node['Index Name'] ? ` using ${node['Index Name']}` : '';
    const cond = node['Index Cond'] ? ` [${node['Index Cond']}]` : '';
    const filter = node.Filter ? ` filter ${node.Filter}` : '';
    lines.push(`${'  '.repeat(depth)}${node['Node Type']}${on}${using}${cond}${filter} (rows ${node['Plan Rows'] ?? '?'})`);
    for (const child of node.Plans ?? []) walk(child, depth + 1);
  };
  walk(plan, 0);
  return lines;
}

export interface BatteryRequest {
  readonly label: string;
  readonly method: 'GET' | 'POST';
  readonly path: string;
  readonly headers: Record<string, string>;
  readonly body?: unknown;
}

export interface StatementPlan {
  readonly text: string;
  readonly outline: readonly string[];
  readonly scans: readonly TableScan[];
}

export interface RequestPlans {
  readonly label: string;
  readonly path: string;
  readonly status: number;
  readonly ms: number;
  readonly statements: readonly StatementPlan[];
}

/** Fastify's `inject` as the sender of planRequests: in process, no socket. */
export function injectInto(fastify: {
  inject(options: {
    method: 'GET' | 'POST';
    url: string;
    headers: Record<string, string>;
    payload?: object;
  }): Promise<{ statusCode: number }>;
}): (r: BatteryRequest) => Promise<number> {
  return async (r) =>
    (
      await fastify.inject({
        method: r.method,
        url: r.path,
        headers: r.headers,
        ...(r.body === undefined ? {} : { payload: r.body as object }),
      })
    ).statusCode;
}

/**
 * Sends each request (one at a time, through `send`) while recording, then explains every
 * distinct read statement each one sent. `explainDb` is where the plans are asked for: set its
 * planner options (e.g. enable_seqscan) before.
 */
export async function planRequests(
  requests: readonly BatteryRequest[],
  send: (r: BatteryRequest) => Promise<number>,
  explainDb: Client,
  large: ReadonlySet<string> = LARGE_TABLES,
): Promise<RequestPlans[]> {
  const recorder = recordQueries();
  const sent: { request: BatteryRequest; status: number; ms: number }[] = [];
  try {
    for (const request of requests) {
      recorder.label(request.label);
      const started = process.hrtime.bigint();
      const status = await send(request);
      sent.push({ request, status, ms: Number(process.hrtime.bigint() - started) / 1e6 });
      recorder.label(null);
    }
  } finally {
    recorder.restore();
  }
  const out: RequestPlans[] = [];
  for (const { request, status, ms } of sent) {
    const seen = new Set<string>();
    const statements: StatementPlan[] = [];
    for (const query of recorder.recorded.filter((r) => r.label === request.label)) {
      if (seen.has(query.text)) continue;
      seen.add(query.text);
      const plan = await explain(explainDb, query);
      statements.push({ text: query.text, outline: planOutline(plan), scans: tableScans(plan, large) });
    }
    out.push({ label: request.label, path: request.path, status, ms, statements });
  }
  return out;
}
