import type { PrismaClient } from '@registry/data';

import { seedCast, seedCredential, seedFactor, seedPerson, seedVessel, sessionFor } from '../support/factories';

const DAY = 86_400_000;

/**
 * The drinking-water lab of the demo authority: two analysts with their own factors
 * on the same pipette, a burette with a correction curve, a quarantined pipette,
 * and a wastewater analyst who happens to carry the same external reference in her lab.
 */
export async function factorScenario(prisma: PrismaClient) {
  const cast = await seedCast(prisma);
  const labId = cast.lab.id;
  const lena = await seedPerson(prisma, {
    email: `lena.berger-${Date.now().toString(36)}@waterworks.example`,
    displayName: 'Lena Berger',
    labs: [{ labId, role: 'analyst', externalRef: 'DW-ANA-07' }],
  });
  const colleague = await seedPerson(prisma, {
    displayName: 'Tomas Novak',
    labs: [{ labId, role: 'analyst', externalRef: 'DW-ANA-08' }],
  });
  const outsider = await seedPerson(prisma, {
    displayName: 'Wastewater Analyst',
    labs: [{ labId: cast.otherLab.id, role: 'analyst', externalRef: 'DW-ANA-07' }],
  });

  const pipette = await seedVessel(prisma, labId);
  const burette = await seedVessel(prisma, labId, {
    assetTag: `BUR-50-${lena.id.slice(0, 6)}`,
    kind: 'burette',
    nominalVolumeMl: '50',
    graduationIntervalMl: '0.1',
    classStandard: 'ISO 385:2005',
    limitMl: '0.05',
  });
  const quarantined = await seedVessel(prisma, labId, { status: 'quarantined' });
  const otherLabVessel = await seedVessel(prisma, cast.otherLab.id);

  // Lena's pipette factor: 25 mL × 0.9996 = 24.99 mL, U = 0.012 mL (k = 2).
  const lenaPipette = await seedFactor(prisma, { labId, personId: lena.id, vesselId: pipette.id });
  // Her colleague's factor on the same pipette: a different technique, a different value.
  const colleaguePipette = await seedFactor(prisma, {
    labId,
    personId: colleague.id,
    vesselId: pipette.id,
    factor: '1.0004',
    correctionMl: '0.01',
    expandedUncertaintyMl: '0.015',
  });
  const lenaBurette = await seedFactor(prisma, {
    labId,
    personId: lena.id,
    vesselId: burette.id,
    kind: 'curve',
    factor: '0.99956',
    curve: [
      { nominalVolumeMl: '10', meanVolumeMl: '9.992', correctionMl: '-0.008', expandedUncertaintyMl: '0.010' },
      { nominalVolumeMl: '25', meanVolumeMl: '24.985', correctionMl: '-0.015', expandedUncertaintyMl: '0.014' },
      { nominalVolumeMl: '50', meanVolumeMl: '49.978', correctionMl: '-0.022', expandedUncertaintyMl: '0.020' },
    ],
    expandedUncertaintyMl: '0.020',
  });
  const lenaQuarantined = await seedFactor(prisma, { labId, personId: lena.id, vesselId: quarantined.id });

  const credential = async (scopes: Parameters<typeof seedCredential>[2], labs: string[] | 'all' = [labId]) =>
    (await seedCredential(prisma, cast.people.admin.id, scopes, labs)).key;
  const keys = {
    read: await credential(['factors:read']),
    correct: await credential(['corrections:write']),
    inventoryOnly: await credential(['inventory:read']),
    otherLabRead: await credential(['factors:read', 'corrections:write'], [cast.otherLab.id]),
    allLabs: await credential(['factors:read', 'corrections:write'], 'all'),
  };
  const tokens = {
    ...cast.tokens,
    lena: await sessionFor(prisma, lena.id),
    colleague: await sessionFor(prisma, colleague.id),
    outsider: await sessionFor(prisma, outsider.id),
  };
  return {
    cast,
    labId,
    people: { lena, colleague, outsider },
    vessels: { pipette, burette, quarantined, otherLabVessel },
    factors: { lenaPipette, colleaguePipette, lenaBurette, lenaQuarantined },
    keys,
    tokens,
  };
}

export type FactorScenario = Awaited<ReturnType<typeof factorScenario>>;

export const daysAgo = (n: number): Date => new Date(Date.now() - n * DAY);
export const daysAhead = (n: number): Date => new Date(Date.now() + n * DAY);
