import type { Client } from 'pg';

import { newCredentialKey } from '../../apps/api/src/auth/tokens';
import { BALANCE_MODELS } from './catalogue';
import { AUDIT_COLUMNS, type AuditRow, auditRows } from './columns';
import { copyRows } from './copy-writer';
import { SeededRandom } from './random';
import type { Lab, World } from './world';

/** Labs, people, memberships, balances, weights, instruments and a service credential, each with its audit entry. */
export async function seedPeopleAndItems(db: Client, world: World, passwordHash: string): Promise<string> {
  const audit: AuditRow[] = [];
  const created = (entityType: string, entityId: string, labId: string | null, values: object): AuditRow => [
    'system',
    null,
    'create',
    entityType,
    entityId,
    labId,
    null,
    values,
    'bench data',
  ];
  await copyRows(
    db,
    'labs',
    ['id', 'code', 'name', 'time_zone', 'created_at', 'updated_at'],
    world.labs.map((l) => {
      audit.push(created('lab', l.id, l.id, { code: l.code, name: l.name, timeZone: 'Europe/Berlin' }));
      return [l.id, l.code, l.name, 'Europe/Berlin', l.createdAt, l.createdAt];
    }),
  );
  await copyRows(
    db,
    'people',
    ['id', 'email', 'display_name', 'status', 'registry_role', 'password_hash', 'password_set_at', 'version', 'created_at', 'updated_at'],
    world.people.map((p) => {
      audit.push(created('person', p.id, null, { email: p.email, displayName: p.displayName }));
      return [
        p.id,
        p.email,
        p.displayName,
        p.status,
        p.registryRole,
        p.signsIn ? passwordHash : null,
        p.signsIn ? p.createdAt : null,
        p.status === 'active' ? 1 : 2,
        p.createdAt,
        p.createdAt,
      ];
    }),
  );
  await copyRows(
    db,
    'lab_memberships',
    ['lab_id', 'person_id', 'lab_role', 'external_ref', 'created_at'],
    world.people.flatMap((p) =>
      p.memberships.map((m) => {
        audit.push(created('lab-membership', `${m.labId}/${p.id}`, m.labId, { lab: m.labId, role: m.role, externalRef: m.externalRef }));
        return [m.labId, p.id, m.role, m.externalRef, p.createdAt];
      }),
    ),
  );
  const labs: readonly Lab[] = world.labs;
  await copyRows(
    db,
    'balances',
    [
      'id',
      'lab_id',
      'asset_tag',
      'maker_serial',
      'model',
      'capacity_g',
      'readability_g',
      'location',
      'status',
      'external_calibration_date',
      'external_calibration_certificate',
      'external_calibration_provider',
      'external_calibration_due',
      'version',
      'created_at',
      'updated_at',
    ],
    labs.flatMap((l) =>
      l.balances.map((b) => {
        const m = BALANCE_MODELS[b.balanceClass];
        audit.push(
          created('balance', b.id, l.id, { assetTag: b.assetTag, model: m.model, capacityG: m.capacityG, readabilityG: m.readabilityG }),
        );
        return [
          b.id,
          l.id,
          b.assetTag,
          b.serial,
          m.model,
          m.capacityG,
          m.readabilityG,
          b.location,
          b.failsAtEnd ? 'quarantined' : 'in-service',
          b.externalDate,
          b.certificate,
          'Regional calibration service',
          b.externalDue,
          b.failsAtEnd ? 2 : 1,
          l.createdAt,
          l.createdAt,
        ];
      }),
    ),
  );
  await copyRows(
    db,
    'reference_weights',
    [
      'id',
      'lab_id',
      'asset_tag',
      'nominal_mass_g',
      'oiml_class',
      'conventional_mass_g',
      'uncertainty_g',
      'density_kg_per_m3',
      'certificate_number',
      'certificate_due',
      'location',
      'created_at',
      'updated_at',
    ],
    labs.flatMap((l) =>
      l.weights.map((w) => {
        audit.push(
          created('reference-weight', w.id, l.id, { assetTag: w.assetTag, nominalMassG: String(w.nominalG), oimlClass: w.oimlClass }),
        );
        return [
          w.id,
          l.id,
          w.assetTag,
          w.nominalG,
          w.oimlClass,
          w.conventionalMassG,
          w.uncertaintyG,
          8000,
          w.certificate,
          w.certificateDue,
          'Weighing room, weight case',
          l.createdAt,
          l.createdAt,
        ];
      }),
    ),
  );
  await copyRows(
    db,
    'instruments',
    [
      'id',
      'lab_id',
      'asset_tag',
      'kind',
      'model',
      'calibration_date',
      'certificate_number',
      'calibration_due',
      'temperature_uncertainty_k',
      'pressure_uncertainty_pa',
      'humidity_uncertainty_percent',
      'location',
      'created_at',
      'updated_at',
    ],
    labs.flatMap((l) =>
      l.instruments.map((i) => {
        audit.push(created('instrument', i.id, l.id, { assetTag: i.assetTag, kind: i.kind }));
        const temperature = i.kind === 'barometer' ? null : '0.1';
        return [
          i.id,
          l.id,
          i.assetTag,
          i.kind,
          null,
          i.calibrationDate,
          i.certificate,
          i.calibrationDue,
          temperature,
          i.kind === 'barometer' ? '50' : null,
          i.kind === 'thermohygrometer' ? '2' : null,
          'Weighing room',
          l.createdAt,
          l.createdAt,
        ];
      }),
    ),
  );
  const { key, keyId, secretHash } = newCredentialKey();
  const credentialId = new SeededRandom(world.labs.length).uuid();
  await db.query(
    `INSERT INTO service_credentials (id, name, key_id, secret_hash, scopes, all_labs, created_by)
     VALUES ($1, 'bench-seed', $2, $3, ARRAY['factors:read', 'corrections:write', 'calculations:run', 'inventory:read'], true, $4)`,
    [credentialId, keyId, Buffer.from(secretHash), world.admin.id],
  );
  audit.push([
    'person',
    world.admin.id,
    'create',
    'service-credential',
    credentialId,
    null,
    null,
    { name: 'bench-seed', keyId, allLabs: true },
    'bench data',
  ]);
  await copyRows(db, 'audit_entries', AUDIT_COLUMNS, auditRows(audit));
  return key;
}
