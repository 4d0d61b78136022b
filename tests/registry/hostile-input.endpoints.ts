import type { z } from 'zod';

import { auditTrailQuerySchema } from '../../apps/api/src/audit-trail/audit-trail.schemas';
import { CheckListQuerySchema, RecordCheckSchema } from '../../apps/api/src/balance-checks/balance-check.schemas';
import { WeighingCorrectionRequestSchema } from '../../apps/api/src/balance-checks/weighing-correction.schemas';
import {
  BALANCE_SORTS,
  BalanceListQuerySchema,
  CreateBalanceSchema,
  UpdateBalanceSchema,
} from '../../apps/api/src/balances/balance.schemas';
import { createFeedSchema, feedListQuerySchema } from '../../apps/api/src/calendar-feeds/calendar-feed.schemas';
import { BalanceCheckRequestSchema } from '../../apps/api/src/calculations/balance.schemas';
import { EXAMPLES } from '../../apps/api/src/calculations/calculations.examples';
import {
  AirConditionsSchema,
  BuoyancyRequestSchema,
  ConventionalMassRequestSchema,
  WaterDensityRequestSchema,
  ZFactorRequestSchema,
} from '../../apps/api/src/calculations/calculations.schemas';
import { GravimetricVolumeRequestSchema } from '../../apps/api/src/calculations/gravimetric.schemas';
import {
  ApproveCalibrationSchema,
  CalibrationListQuerySchema,
  CreateCalibrationSchema,
  ReturnCalibrationSchema,
  SubmitCalibrationSchema,
  UpdateCalibrationSchema,
  VoidCalibrationSchema,
} from '../../apps/api/src/calibrations/calibration.schemas';
import { createCredentialSchema, credentialListQuerySchema } from '../../apps/api/src/credentials/credentials.schemas';
import { deliveryListQuerySchema } from '../../apps/api/src/deliveries/delivery.schemas';
import { CreateExportSchema, ExportListQuerySchema, VerifyDigestSchema } from '../../apps/api/src/exports/export.schemas';
import { CorrectionRequestSchema, CurrentFactorQuerySchema, FactorListQuerySchema } from '../../apps/api/src/factors/factor.schemas';
import { dueListQuerySchema } from '../../apps/api/src/due/due.schemas';
import { OutOfToleranceRequestSchema } from '../../apps/api/src/impact/out-of-tolerance.schemas';
import {
  CreateInstrumentSchema,
  INSTRUMENT_SORTS,
  InstrumentListQuerySchema,
  UpdateInstrumentSchema,
} from '../../apps/api/src/instruments/instrument.schemas';
import { createLabSchema, labListQuerySchema, updateLabSchema } from '../../apps/api/src/labs/labs.schemas';
import { setMembershipSchema } from '../../apps/api/src/labs/memberships.schemas';
import { noticeListQuerySchema } from '../../apps/api/src/notices/notice.schemas';
import { createPersonSchema, personListQuerySchema, updatePersonSchema } from '../../apps/api/src/people/people.schemas';
import { changeListQuerySchema, createPolicySchema, policyListQuerySchema } from '../../apps/api/src/policies/due-policy.schemas';
import {
  CreateReferenceWeightSchema,
  REFERENCE_WEIGHT_SORTS,
  ReferenceWeightListQuerySchema,
  UpdateReferenceWeightSchema,
} from '../../apps/api/src/reference-weights/reference-weight.schemas';
import { ToleranceQuerySchema } from '../../apps/api/src/reference/reference.schemas';
import { changePasswordSchema, signInSchema } from '../../apps/api/src/sessions/sessions.schemas';
import { CreateVesselSchema, UpdateVesselSchema, VESSEL_SORTS, VesselListQuerySchema } from '../../apps/api/src/vessels/vessel.schemas';
import { createWebhookSchema, webhookListQuerySchema } from '../../apps/api/src/webhooks/webhook.schemas';
import type { Hostile } from './hostile-input.arbitraries';
import type { HostileWorld } from './hostile-input.world';

/** A write endpoint: its schema, a valid body to mutate, where to send it and as whom. */
export interface BodyEndpoint {
  readonly route: string;
  readonly schema: z.ZodType;
  readonly seed: (w: HostileWorld) => Hostile;
  readonly path: (w: HostileWorld) => string;
  readonly as: (w: HostileWorld) => string | null;
  /** The If-Match that is current for the target, read before each run. */
  readonly ifMatch?: (w: HostileWorld) => Promise<string>;
  /** Tables a refusal of a schema-valid body may still write (a failed sign-in is counted and audited). */
  readonly refusalWrites?: readonly string[];
}

const version = async (read: Promise<{ version: number }>) => `"v${(await read).version}"`;
const PASSWORD_FAILURES = ['sign_in_failures', 'audit_entries'];

export const BODY_ENDPOINTS: readonly BodyEndpoint[] = [
  {
    route: 'POST /v1/due-policies',
    schema: createPolicySchema,
    seed: (w) => ({ labId: w.labA, subjectKind: 'instrument', intervalDays: 365, dueSoonDays: 30, reason: 'Thermometers once a year' }),
    path: () => '/v1/due-policies',
    as: (w) => w.tokens.manager,
  },
  {
    route: 'POST /v1/labs/:labId/calendar-feeds',
    schema: createFeedSchema,
    seed: () => ({ name: 'DW-CHEM shared calendar' }),
    path: (w) => `/v1/labs/${w.labA}/calendar-feeds`,
    as: (w) => w.tokens.manager,
  },
  {
    route: 'POST /v1/sessions',
    schema: signInSchema,
    seed: (w) => ({ email: w.people.manager.email, password: 'not the right password' }),
    path: () => '/v1/sessions',
    as: () => null,
    refusalWrites: PASSWORD_FAILURES,
  },
  {
    route: 'POST /v1/me/password',
    schema: changePasswordSchema,
    seed: (w) => ({ currentPassword: w.password, newPassword: 'volumetric flask filled to the mark' }),
    path: () => '/v1/me/password',
    as: (w) => w.tokens.passwordChanger,
    refusalWrites: PASSWORD_FAILURES,
  },
  {
    route: 'POST /v1/people',
    schema: createPersonSchema,
    seed: () => ({ email: 'new.analyst@waterworks.example', displayName: 'New Analyst', registryRole: null }),
    path: () => '/v1/people',
    as: (w) => w.tokens.admin,
  },
  {
    route: 'PATCH /v1/people/:personId',
    schema: updatePersonSchema,
    seed: () => ({ displayName: 'Renamed Analyst', status: 'active' }),
    path: (w) => `/v1/people/${w.targets.person.id}`,
    as: (w) => w.tokens.admin,
    ifMatch: (w) => version(w.prisma.person.findUniqueOrThrow({ where: { id: w.targets.person.id } })),
  },
  {
    route: 'POST /v1/labs',
    schema: createLabSchema,
    seed: () => ({ code: 'TEACH', name: 'Teaching laboratory', timeZone: 'Europe/Vienna', fourEyesRequired: true }),
    path: () => '/v1/labs',
    as: (w) => w.tokens.admin,
  },
  {
    route: 'PATCH /v1/labs/:labId',
    schema: updateLabSchema,
    seed: () => ({ name: 'Teaching laboratory', timeZone: 'UTC', fourEyesRequired: false }),
    path: (w) => `/v1/labs/${w.targets.lab.id}`,
    as: (w) => w.tokens.admin,
    ifMatch: (w) => version(w.prisma.lab.findUniqueOrThrow({ where: { id: w.targets.lab.id } })),
  },
  {
    route: 'PUT /v1/labs/:labId/members/:personId',
    schema: setMembershipSchema,
    seed: () => ({ role: 'analyst', externalRef: 'DW-ANA-99' }),
    path: (w) => `/v1/labs/${w.labA}/members/${w.targets.person.id}`,
    as: (w) => w.tokens.manager,
  },
  {
    route: 'POST /v1/labs/:labId/webhooks',
    schema: createWebhookSchema,
    seed: () => ({
      url: 'https://samples.waterworks.example/hooks/registry',
      description: 'Due dates into the sample-management system',
      eventKinds: ['due-soon'],
    }),
    path: (w) => `/v1/labs/${w.labA}/webhooks`,
    as: (w) => w.tokens.manager,
  },
  {
    route: 'POST /v1/service-credentials',
    schema: createCredentialSchema,
    seed: (w) => ({ name: 'Sample-management system', scopes: ['factors:read', 'corrections:write'], labIds: [w.labA] }),
    path: () => '/v1/service-credentials',
    as: (w) => w.tokens.admin,
  },
  ...inventory('vessels', CreateVesselSchema, UpdateVesselSchema, {
    assetTag: 'PIP-25-H01',
    kind: 'one-mark-pipette',
    nominalVolumeMl: '25',
    accuracyClass: 'AS',
    material: 'borosilicate-3-3',
    location: 'Titration bench',
  }),
  ...inventory('balances', CreateBalanceSchema, UpdateBalanceSchema, {
    assetTag: 'BAL-H01',
    capacityG: '220',
    readabilityG: '0.0001',
    externalCalibrationDate: '2026-01-14',
    externalCalibrationDue: '2027-01-14',
  }),
  ...inventory('reference-weights', CreateReferenceWeightSchema, UpdateReferenceWeightSchema, {
    assetTag: 'CW-F1-H01',
    nominalMassG: '100',
    oimlClass: 'F1',
    conventionalMassG: '100.00012',
    certificateDue: '2028-03-31',
  }),
  ...inventory('instruments', CreateInstrumentSchema, UpdateInstrumentSchema, {
    assetTag: 'TH-H01',
    kind: 'thermometer',
    temperatureUncertaintyK: '0.05',
    calibrationDate: '2026-02-03',
    calibrationDue: '2027-02-03',
  }),
  {
    route: 'POST /v1/calibrations',
    schema: CreateCalibrationSchema,
    seed: (w) => w.calibrationBody as Hostile,
    path: () => '/v1/calibrations',
    as: (w) => w.tokens.analyst,
  },
  {
    route: 'PATCH /v1/calibrations/:id',
    schema: UpdateCalibrationSchema,
    seed: (w) => {
      const { vesselId: _vessel, ...rest } = w.calibrationBody as Record<string, Hostile>;
      return rest;
    },
    path: (w) => `/v1/calibrations/${w.targets.draft}`,
    as: (w) => w.tokens.analyst,
    ifMatch: (w) => version(w.prisma.calibration.findUniqueOrThrow({ where: { id: w.targets.draft } })),
  },
  ...(
    [
      ['submit', SubmitCalibrationSchema, { exceptionReason: 'Certificate renewed on site' }, 'draft', 'analyst'],
      ['approve', ApproveCalibrationSchema, { note: 'Raw data checked' }, 'submitted', 'manager'],
      ['return', ReturnCalibrationSchema, { note: 'Replicate 3 looks mistyped' }, 'submitted', 'manager'],
      ['void', VoidCalibrationSchema, { reason: 'Entered against the wrong vessel' }, 'submitted', 'manager'],
    ] as const
  ).map(([action, schema, seed, target, who]): BodyEndpoint => ({
    route: `POST /v1/calibrations/:id/${action}`,
    schema,
    seed: () => seed,
    path: (w) => `/v1/calibrations/${w.targets[target]}/${action}`,
    as: (w) => w.tokens[who],
    ifMatch: (w) => version(w.prisma.calibration.findUniqueOrThrow({ where: { id: w.targets[target] } })),
  })),
  {
    route: 'POST /v1/balances/:balanceId/checks',
    schema: RecordCheckSchema,
    seed: (w) => ({ kind: 'quick', referenceWeightId: w.targets.checkWeight.id, readingsG: ['100.0001', '100.0000'], limitG: '0.0003' }),
    path: (w) => `/v1/balances/${w.targets.checkedBalance.id}/checks`,
    as: (w) => w.tokens.analyst,
  },
  {
    route: 'POST /v1/balances/:balanceId/weighing-corrections',
    schema: WeighingCorrectionRequestSchema,
    seed: () => ({
      readingG: '0.40842',
      objectDensityKgPerM3: '1636',
      airConditions: { temperatureC: '21.8', pressurePa: '98650', relativeHumidityPercent: '41' },
    }),
    path: (w) => `/v1/balances/${w.targets.traceableBalance.id}/weighing-corrections`,
    as: (w) => w.tokens.analyst,
  },
  {
    route: 'POST /v1/instruments/:instrumentId/out-of-tolerance',
    schema: OutOfToleranceRequestSchema,
    seed: () => ({ foundAt: '2026-01-02T10:30:00Z', reason: 'Reads 0.4 K high at 20 °C' }),
    path: (w) => `/v1/instruments/${w.targets.suspectThermometer.id}/out-of-tolerance`,
    as: (w) => w.tokens.manager,
  },
  {
    route: 'POST /v1/factors/corrections',
    schema: CorrectionRequestSchema,
    seed: (w) => ({
      personId: w.people.analyst.id,
      vesselId: w.targets.factor.vesselId,
      indicatedVolumeMl: '25',
      liquidTemperatureC: '23.5',
    }),
    path: () => '/v1/factors/corrections',
    as: (w) => w.tokens.analyst,
  },
  ...(
    [
      ['water-density', WaterDensityRequestSchema, EXAMPLES.waterDensity.demo.value],
      ['air-density', AirConditionsSchema, EXAMPLES.airDensity.demo.value],
      ['z-factor', ZFactorRequestSchema, EXAMPLES.zFactor.demo.value],
      ['gravimetric-volume', GravimetricVolumeRequestSchema, EXAMPLES.gravimetricVolume.pipette.value],
      ['buoyancy', BuoyancyRequestSchema, EXAMPLES.buoyancy.demo.value],
      ['conventional-mass', ConventionalMassRequestSchema, EXAMPLES.conventionalMass.demo.value],
      ['balance-check', BalanceCheckRequestSchema, EXAMPLES.balanceCheck.demo.value],
    ] as const
  ).map(([name, schema, seed]): BodyEndpoint => ({
    route: `POST /v1/calculations/${name}`,
    schema: schema as z.ZodType,
    seed: () => seed as unknown as Hostile,
    path: () => `/v1/calculations/${name}`,
    as: (w) => w.tokens.analyst,
  })),
  {
    route: 'POST /v1/exports',
    schema: CreateExportSchema,
    seed: (w) => ({
      report: 'calibration-log',
      format: 'csv',
      labIds: [w.labA],
      from: '2026-01-01T00:00:00Z',
      to: '2027-01-01T00:00:00Z',
      asOf: '2026-06-30T12:00:00Z',
    }),
    path: () => '/v1/exports',
    as: (w) => w.tokens.admin,
  },
  {
    route: 'POST /v1/exports/verification',
    schema: VerifyDigestSchema,
    seed: () => ({ sha256: '9f86d081884c7d659a2feaa0c55ad015a3bf4f1b2b0b822cd15d6c15b0f00a08' }),
    path: () => '/v1/exports/verification',
    as: (w) => w.tokens.admin,
  },
];

function inventory(
  name: keyof HostileWorld['targets']['items'],
  create: z.ZodType,
  update: z.ZodType,
  body: Record<string, string>,
): BodyEndpoint[] {
  const { assetTag: _tag, ...changes } = body;
  return [
    {
      route: `POST /v1/${name}`,
      schema: create,
      seed: (w) => ({ labId: w.labA, ...body }),
      path: () => `/v1/${name}`,
      as: (w) => w.tokens.manager,
    },
    {
      route: `PATCH /v1/${name}/:id`,
      schema: update,
      seed: () => ({ ...changes, status: 'quarantined', reason: 'Dropped on the bench', notes: 'Checked after the fall' }),
      path: (w) => `/v1/${name}/${w.targets.items[name].id}`,
      as: (w) => w.tokens.manager,
      ifMatch: async (w) => `"v${await w.versionOf(name)}"`,
    },
  ];
}

/** A list (or lookup) route: its query schema and, for keyset pages, its sort keys. */
export interface QueryEndpoint {
  readonly route: string;
  readonly schema: z.ZodType;
  readonly path: (w: HostileWorld) => string;
  /** Members every request carries so that the hostile ones are what is tested (a lookup needs its ids). */
  readonly valid?: (w: HostileWorld) => Record<string, string>;
  readonly sorts?: readonly string[];
}

export const QUERY_ENDPOINTS: readonly QueryEndpoint[] = [
  { route: 'GET /v1/due', schema: dueListQuerySchema, path: () => '/v1/due' },
  { route: 'GET /v1/notices', schema: noticeListQuerySchema, path: () => '/v1/notices' },
  { route: 'GET /v1/due-policies', schema: policyListQuerySchema, path: () => '/v1/due-policies' },
  { route: 'GET /v1/interval-changes', schema: changeListQuerySchema, path: () => '/v1/interval-changes' },
  { route: 'GET /v1/labs/:labId/calendar-feeds', schema: feedListQuerySchema, path: (w) => `/v1/labs/${w.labA}/calendar-feeds` },
  { route: 'GET /v1/vessels', schema: VesselListQuerySchema, path: () => '/v1/vessels', sorts: VESSEL_SORTS },
  { route: 'GET /v1/balances', schema: BalanceListQuerySchema, path: () => '/v1/balances', sorts: BALANCE_SORTS },
  {
    route: 'GET /v1/reference-weights',
    schema: ReferenceWeightListQuerySchema,
    path: () => '/v1/reference-weights',
    sorts: REFERENCE_WEIGHT_SORTS,
  },
  { route: 'GET /v1/instruments', schema: InstrumentListQuerySchema, path: () => '/v1/instruments', sorts: INSTRUMENT_SORTS },
  { route: 'GET /v1/people', schema: personListQuerySchema, path: () => '/v1/people' },
  { route: 'GET /v1/labs', schema: labListQuerySchema, path: () => '/v1/labs' },
  { route: 'GET /v1/service-credentials', schema: credentialListQuerySchema, path: () => '/v1/service-credentials' },
  { route: 'GET /v1/audit-trail', schema: auditTrailQuerySchema, path: () => '/v1/audit-trail' },
  { route: 'GET /v1/calibrations', schema: CalibrationListQuerySchema, path: () => '/v1/calibrations' },
  { route: 'GET /v1/factors', schema: FactorListQuerySchema, path: () => '/v1/factors' },
  {
    route: 'GET /v1/factors/current',
    schema: CurrentFactorQuerySchema,
    path: () => '/v1/factors/current',
    valid: (w) => ({ personId: w.people.analyst.id, vesselId: w.targets.factor.vesselId }),
  },
  {
    route: 'GET /v1/balances/:balanceId/checks',
    schema: CheckListQuerySchema,
    path: (w) => `/v1/balances/${w.targets.checkedBalance.id}/checks`,
  },
  { route: 'GET /v1/reference/tolerances', schema: ToleranceQuerySchema, path: () => '/v1/reference/tolerances' },
  { route: 'GET /v1/labs/:labId/webhooks', schema: webhookListQuerySchema, path: (w) => `/v1/labs/${w.labA}/webhooks` },
  { route: 'GET /v1/labs/:labId/deliveries', schema: deliveryListQuerySchema, path: (w) => `/v1/labs/${w.labA}/deliveries` },
  { route: 'GET /v1/exports', schema: ExportListQuerySchema, path: () => '/v1/exports' },
];

/** Routes with path parameters, to be called with malformed or unknown ids. */
export const PARAM_ROUTES: readonly string[] = [
  'GET /v1/due-policies/:policyId',
  'PATCH /v1/due-policies/:policyId',
  'POST /v1/notices/:noticeId/acknowledge',
  'GET /v1/labs/:labId/calendar-feeds',
  'POST /v1/labs/:labId/calendar-feeds',
  'POST /v1/labs/:labId/calendar-feeds/:feedId/revoke',
  'GET /v1/people/:personId',
  'PATCH /v1/people/:personId',
  'GET /v1/labs/:labId',
  'PATCH /v1/labs/:labId',
  'GET /v1/labs/:labId/members',
  'PUT /v1/labs/:labId/members/:personId',
  'DELETE /v1/labs/:labId/members/:personId',
  'GET /v1/service-credentials/:credentialId',
  'POST /v1/service-credentials/:credentialId/rotate',
  'POST /v1/service-credentials/:credentialId/revoke',
  'GET /v1/vessels/:id',
  'PATCH /v1/vessels/:id',
  'GET /v1/balances/:id',
  'PATCH /v1/balances/:id',
  'GET /v1/reference-weights/:id',
  'PATCH /v1/reference-weights/:id',
  'GET /v1/instruments/:id',
  'PATCH /v1/instruments/:id',
  'GET /v1/calibrations/:id',
  'PATCH /v1/calibrations/:id',
  'POST /v1/calibrations/:id/submit',
  'POST /v1/calibrations/:id/approve',
  'POST /v1/calibrations/:id/return',
  'POST /v1/calibrations/:id/void',
  'GET /v1/factors/:id',
  'GET /v1/balances/:balanceId/checks',
  'POST /v1/balances/:balanceId/checks',
  'GET /v1/balances/:balanceId/checks/:checkId',
  'POST /v1/balances/:balanceId/weighing-corrections',
  'POST /v1/instruments/:instrumentId/out-of-tolerance',
  'GET /v1/labs/:labId/webhooks',
  'POST /v1/labs/:labId/webhooks',
  'GET /v1/labs/:labId/webhooks/:webhookId',
  'PATCH /v1/labs/:labId/webhooks/:webhookId',
  'POST /v1/labs/:labId/webhooks/:webhookId/rotate-secret',
  'GET /v1/labs/:labId/deliveries',
  'POST /v1/labs/:labId/deliveries/:deliveryId/redeliver',
  'GET /v1/exports/:exportId',
  'GET /problems/:code',
];
