import type { Client } from 'pg';

import { sessionsFor } from '../support/plan-battery';

/** A (person, vessel) pair with a current factor, asked for by the service credential. */
export interface SoakPair {
  readonly personId: string;
  readonly vesselId: string;
  readonly email: string;
  readonly assetTag: string;
  readonly indicatedVolumeMl: string;
}

/** What one lab's people need to calibrate: sessions, 25 mL pipettes, a traceable balance and thermometer. */
export interface SoakLab {
  readonly labId: string;
  /** Managers approve (never their own runs: four-eyes). */
  readonly managerTokens: readonly string[];
  readonly analystTokens: readonly string[];
  readonly pipetteIds: readonly string[];
  readonly balanceId: string;
  /** A 100 g reference weight of the lab for the balance's routine check before the run. */
  readonly checkWeight: { readonly id: string; readonly conventionalMassG: string };
  readonly thermometerId: string;
}

export interface SoakWorld {
  readonly credentialKey: string;
  readonly pairs: readonly SoakPair[];
  readonly labs: readonly SoakLab[];
}

/**
 * Picks the traffic's targets from a seeded registry by SQL and writes sessions for the people
 * chosen (as the sign-in writes them): pairs with a current factor in force now, not marked for
 * review, on an in-service vessel, whose person is an active member of the vessel's lab; per
 * lab, active managers and analysts, in-service 25 mL one-mark pipettes to deliver (with a limit
 * a good run meets, or none), a balance and thermometer in service whose calibration is not
 * overdue, and a certified 100 g weight for the balance's routine check (recorded through the
 * API before the run: see `checkBalances`).
 */
export async function soakWorld(db: Client, credentialKey: string, maxPairs = 1000): Promise<SoakWorld> {
  const { rows: pairs } = await db.query<SoakPair>(
    `SELECT f.person_id AS "personId", f.vessel_id AS "vesselId", p.email, v.asset_tag AS "assetTag",
            (v.nominal_volume_ml::float8)::text AS "indicatedVolumeMl"
       FROM factors f
       JOIN people p ON p.id = f.person_id AND p.status = 'active'
       JOIN vessels v ON v.id = f.vessel_id AND v.status = 'in-service'
       JOIN lab_memberships m ON m.lab_id = v.lab_id AND m.person_id = p.id
      WHERE f.state = 'current' AND f.review_required_at IS NULL
        AND f.valid_from <= now() AND f.valid_until > now() + interval '1 day'
      ORDER BY f.id LIMIT $1`,
    [maxPairs],
  );
  if (pairs.length === 0) throw new Error('the registry has no (person, vessel) pair with a current factor in force');

  const { rows } = await db.query<{
    lab_id: string;
    managers: string[] | null;
    analysts: string[] | null;
    pipettes: string[] | null;
    balance_id: string | null;
    weight_id: string | null;
    weight_g: string | null;
    thermometer_id: string | null;
  }>(`
    SELECT l.id AS lab_id,
           (SELECT array_agg(m.person_id ORDER BY m.person_id) FROM lab_memberships m JOIN people p ON p.id = m.person_id
             WHERE m.lab_id = l.id AND m.lab_role = 'manager' AND p.status = 'active') AS managers,
           (SELECT array_agg(person_id) FROM (SELECT m.person_id FROM lab_memberships m JOIN people p ON p.id = m.person_id
             WHERE m.lab_id = l.id AND m.lab_role = 'analyst' AND p.status = 'active' ORDER BY m.person_id LIMIT 8) a) AS analysts,
           (SELECT array_agg(id) FROM (SELECT v.id FROM vessels v
             WHERE v.lab_id = l.id AND v.kind = 'one-mark-pipette' AND v.delivery_mode = 'deliver' AND v.nominal_volume_ml = 25
               AND v.status = 'in-service' AND (v.limit_ml IS NULL OR v.limit_ml >= 0.03) ORDER BY v.id LIMIT 100) v) AS pipettes,
           (SELECT b.id FROM balances b
             WHERE b.lab_id = l.id AND b.status = 'in-service' AND b.readability_g <= 0.0001 AND b.capacity_g >= 110
               AND b.external_calibration_due >= (now() AT TIME ZONE l.time_zone)::date + 1
             ORDER BY b.id LIMIT 1) AS balance_id,
           (SELECT w.id FROM reference_weights w
             WHERE w.lab_id = l.id AND w.status = 'in-service' AND w.nominal_mass_g = 100 AND w.conventional_mass_g IS NOT NULL
               AND w.certificate_due >= (now() AT TIME ZONE l.time_zone)::date + 1
             ORDER BY w.id LIMIT 1) AS weight_id,
           (SELECT round(w.conventional_mass_g, 4)::text FROM reference_weights w
             WHERE w.lab_id = l.id AND w.status = 'in-service' AND w.nominal_mass_g = 100 AND w.conventional_mass_g IS NOT NULL
               AND w.certificate_due >= (now() AT TIME ZONE l.time_zone)::date + 1
             ORDER BY w.id LIMIT 1) AS weight_g,
           (SELECT i.id FROM instruments i
             WHERE i.lab_id = l.id AND i.status = 'in-service' AND i.kind IN ('thermometer', 'thermohygrometer')
               AND i.calibration_due >= (now() AT TIME ZONE l.time_zone)::date + 1
             ORDER BY i.id LIMIT 1) AS thermometer_id
      FROM labs l
     WHERE l.retired_at IS NULL
     ORDER BY l.code`);
  const usable = rows.filter(
    (r) =>
      (r.managers?.length ?? 0) > 0 &&
      (r.analysts?.length ?? 0) > 0 &&
      (r.pipettes?.length ?? 0) > 0 &&
      r.balance_id &&
      r.weight_id &&
      r.thermometer_id,
  );
  if (usable.length === 0) {
    throw new Error(
      `no lab has managers, analysts, 25 mL pipettes and a traceable balance and thermometer today: ${JSON.stringify(
        rows.map((r) => ({ lab: r.lab_id, balance: r.balance_id, thermometer: r.thermometer_id, pipettes: r.pipettes?.length ?? 0 })),
      )}`,
    );
  }
  const people = [...new Set(usable.flatMap((r) => [...(r.managers ?? []), ...(r.analysts ?? [])]))];
  const tokens = await sessionsFor(db, people);
  const token = (id: string) => tokens.get(id) as string;
  return {
    credentialKey,
    pairs,
    labs: usable.map((r) => ({
      labId: r.lab_id,
      managerTokens: (r.managers ?? []).map(token),
      analystTokens: (r.analysts ?? []).map(token),
      pipetteIds: r.pipettes ?? [],
      balanceId: r.balance_id as string,
      checkWeight: { id: r.weight_id as string, conventionalMassG: r.weight_g as string },
      thermometerId: r.thermometer_id as string,
    })),
  };
}
