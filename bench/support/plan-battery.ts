/**
 * The hot paths whose query plans are checked: every list with its usual filters and sorts, the
 * due list, the notices, the audit trail, and the factor service by every identifier form. Each
 * entry is one request; bench/support/query-plans.ts records the statements it sends.
 */
import type { Client } from 'pg';

import { newSessionToken } from '../../apps/api/src/auth/tokens';
import type { BatteryRequest } from './query-plans';

export interface PlanWorld {
  readonly adminToken: string;
  /** A manager of `labId`. */
  readonly managerToken: string;
  /** A service credential that may read factors of every lab. */
  readonly credentialKey: string;
  readonly labId: string;
  /** A person with a current factor on `vesselId`, a member of `labId`. */
  readonly personId: string;
  readonly email: string;
  readonly externalRef: string | null;
  readonly vesselId: string;
  readonly assetTag: string;
  readonly indicatedVolumeMl: string;
  readonly balanceId: string;
  readonly calibrationId: string;
  readonly factorId: string;
  /** An instant inside the factor's validity (ISO 8601). */
  readonly factorInForceAt: string;
}

export interface PlanRequest {
  readonly label: string;
  readonly method: 'GET' | 'POST';
  readonly path: string;
  readonly as: 'admin' | 'manager' | 'credential';
  readonly body?: unknown;
}

const q = (path: string, params: Record<string, string>) => `${path}?${new URLSearchParams(params)}`;

export function planBattery(w: PlanWorld): PlanRequest[] {
  const get = (label: string, path: string, as: PlanRequest['as'] = 'manager'): PlanRequest => ({ label, method: 'GET', path, as });
  const lab = { labId: w.labId };
  const requests: PlanRequest[] = [
    get(
      'vessels: lab, kind, in service, by tag',
      q('/v1/vessels', { ...lab, kind: 'one-mark-pipette', status: 'in-service', limit: '50' }),
    ),
    get('vessels: lab, newest changes first', q('/v1/vessels', { ...lab, sort: '-updatedAt', limit: '50' })),
    get('vessels: lab, by volume', q('/v1/vessels', { ...lab, sort: 'nominalVolumeMl', limit: '50' })),
    get('vessels: lab, search', q('/v1/vessels', { ...lab, q: w.assetTag.slice(0, 8), limit: '50' })),
    get('vessels: lab, class A', q('/v1/vessels', { ...lab, accuracyClass: 'A', limit: '50' })),
    get('vessels: every lab, by tag', q('/v1/vessels', { limit: '50' }), 'admin'),
    get('vessels: one', `/v1/vessels/${w.vesselId}`),
    get('balances: lab', q('/v1/balances', lab)),
    get('instruments: lab', q('/v1/instruments', lab)),
    get('reference weights: lab', q('/v1/reference-weights', lab)),
    get('calibrations: lab', q('/v1/calibrations', lab)),
    get('calibrations: lab, submitted', q('/v1/calibrations', { ...lab, state: 'submitted' })),
    get('calibrations: vessel', q('/v1/calibrations', { vesselId: w.vesselId })),
    get('calibrations: performer', q('/v1/calibrations', { performerId: w.personId })),
    get(
      'calibrations: lab, period',
      q('/v1/calibrations', { ...lab, performedFrom: '2026-01-01T00:00:00Z', performedTo: '2026-03-01T00:00:00Z' }),
    ),
    get('calibrations: every lab', q('/v1/calibrations', {}), 'admin'),
    get('calibrations: one', `/v1/calibrations/${w.calibrationId}`),
    get('factors: person', q('/v1/factors', { personId: w.personId })),
    get('factors: vessel', q('/v1/factors', { vesselId: w.vesselId })),
    get('factors: lab, current', q('/v1/factors', { ...lab, state: 'current' })),
    get('factors: one', `/v1/factors/${w.factorId}`),
    get('factor lookup: ids', q('/v1/factors/current', { personId: w.personId, vesselId: w.vesselId }), 'credential'),
    get('factor lookup: email, tag', q('/v1/factors/current', { email: w.email, assetTag: w.assetTag }), 'credential'),
    get(
      'factor lookup: ids, at an instant',
      q('/v1/factors/current', { personId: w.personId, vesselId: w.vesselId, at: w.factorInForceAt }),
      'credential',
    ),
    {
      label: 'factor correction: ids',
      method: 'POST',
      path: '/v1/factors/corrections',
      as: 'credential',
      body: { personId: w.personId, vesselId: w.vesselId, indicatedVolumeMl: w.indicatedVolumeMl },
    },
    get('balance checks: balance', `/v1/balances/${w.balanceId}/checks`),
    get('due: lab', q('/v1/due', lab)),
    get('due: lab, overdue', q('/v1/due', { ...lab, state: 'overdue' })),
    get('due: lab, vessels within 30 days', q('/v1/due', { ...lab, subjectKind: 'vessel', withinDays: '30' })),
    get('due: person', q('/v1/due', { personId: w.personId })),
    get('due: every lab, overdue', q('/v1/due', { state: 'overdue' }), 'admin'),
    get('notices: lab', q('/v1/notices', lab)),
    get('notices: lab, not acknowledged', q('/v1/notices', { ...lab, acknowledged: 'false' })),
    get('notices: person', q('/v1/notices', { personId: w.personId })),
    get('audit trail: one vessel', q('/v1/audit-trail', { entityType: 'vessel', entityId: w.vesselId }), 'admin'),
    get('audit trail: lab', q('/v1/audit-trail', lab), 'admin'),
    get('audit trail: actor', q('/v1/audit-trail', { actorId: w.personId }), 'admin'),
    get('audit trail: since', q('/v1/audit-trail', { from: '2026-01-01T00:00:00Z' }), 'admin'),
    get('interval changes: lab', q('/v1/interval-changes', lab)),
    get('exports', '/v1/exports', 'admin'),
    get('deliveries: lab', `/v1/labs/${w.labId}/deliveries`),
    get('people: lab', q('/v1/people', lab)),
    get('lab members', `/v1/labs/${w.labId}/members`),
    get('me', '/v1/me'),
  ];
  if (w.externalRef) {
    requests.push(
      get(
        'factor lookup: lab reference, tag',
        q('/v1/factors/current', { externalRef: w.externalRef, assetTag: w.assetTag }),
        'credential',
      ),
    );
  }
  return requests;
}

/** The battery with each request's credentials in its headers. */
export function planBatteryRequests(w: PlanWorld): BatteryRequest[] {
  const token = { admin: w.adminToken, manager: w.managerToken, credential: w.credentialKey } as const;
  return planBattery(w).map((r) => ({
    label: r.label,
    method: r.method,
    path: r.path,
    headers: { authorization: `Bearer ${token[r.as]}`, ...(r.body === undefined ? {} : { 'content-type': 'application/json' }) },
    ...(r.body === undefined ? {} : { body: r.body }),
  }));
}

/** Sessions (12 h) for people, written as the sign-in writes them. */
export async function sessionsFor(db: Client, personIds: readonly string[]): Promise<Map<string, string>> {
  const tokens = new Map<string, string>();
  for (const id of personIds) {
    const { token, hash } = newSessionToken();
    await db.query(`INSERT INTO sessions (person_id, token_hash, expires_at) VALUES ($1, $2, now() + interval '12 hours')`, [
      id,
      Buffer.from(hash),
    ]);
    tokens.set(id, token);
  }
  return tokens;
}

/**
 * A world for the battery from a seeded registry: the lab with the most vessels, its manager,
 * an administrator, and an active analyst's current factor there with its calibration.
 */
export async function planWorld(db: Client, credentialKey: string): Promise<PlanWorld> {
  const one = async <T extends object>(sql: string, params: unknown[] = []): Promise<T> => {
    const row = (await db.query<T>(sql, params)).rows[0];
    if (!row) throw new Error(`the registry has nothing for: ${sql.replace(/\s+/g, ' ').slice(0, 160)}`);
    return row;
  };
  const lab = await one<{ id: string }>(`SELECT lab_id AS id FROM vessels GROUP BY lab_id ORDER BY count(*) DESC, lab_id LIMIT 1`);
  const manager = await one<{ id: string }>(
    `SELECT m.person_id AS id FROM lab_memberships m JOIN people p ON p.id = m.person_id
      WHERE m.lab_id = $1 AND m.lab_role = 'manager' AND p.status = 'active' ORDER BY m.person_id LIMIT 1`,
    [lab.id],
  );
  const admin = await one<{ id: string }>(
    `SELECT id FROM people WHERE registry_role = 'administrator' AND status = 'active' ORDER BY id LIMIT 1`,
  );
  const factor = await one<{
    factor_id: string;
    calibration_id: string;
    person_id: string;
    email: string;
    external_ref: string | null;
    vessel_id: string;
    asset_tag: string;
    nominal: string;
    in_force_at: Date;
  }>(
    `SELECT f.id AS factor_id, f.calibration_id, p.id AS person_id, p.email, m.external_ref, v.id AS vessel_id, v.asset_tag,
            v.nominal_volume_ml::text AS nominal, f.valid_from + (f.valid_until - f.valid_from) / 2 AS in_force_at
       FROM factors f
       JOIN people p ON p.id = f.person_id AND p.status = 'active'
       JOIN vessels v ON v.id = f.vessel_id AND v.lab_id = $1 AND v.kind = 'one-mark-pipette' AND v.status = 'in-service'
       JOIN lab_memberships m ON m.lab_id = v.lab_id AND m.person_id = p.id
      WHERE f.state = 'current' AND f.valid_until > now() + interval '1 day'
      ORDER BY f.id LIMIT 1`,
    [lab.id],
  );
  const balance = await one<{ id: string }>(`SELECT id FROM balances WHERE lab_id = $1 ORDER BY id LIMIT 1`, [lab.id]);
  const tokens = await sessionsFor(db, [manager.id, admin.id]);
  return {
    adminToken: tokens.get(admin.id) as string,
    managerToken: tokens.get(manager.id) as string,
    credentialKey,
    labId: lab.id,
    personId: factor.person_id,
    email: factor.email,
    externalRef: factor.external_ref,
    vesselId: factor.vessel_id,
    assetTag: factor.asset_tag,
    indicatedVolumeMl: String(Number(factor.nominal)),
    balanceId: balance.id,
    calibrationId: factor.calibration_id,
    factorId: factor.factor_id,
    factorInForceAt: factor.in_force_at.toISOString(),
  };
}
