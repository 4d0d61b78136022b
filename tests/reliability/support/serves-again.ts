import { randomUUID } from 'node:crypto';

import type { PrismaClient } from '@registry/data';

import { call } from './service-process';

export interface ServesAgain {
  readonly baseUrl: string;
  readonly prisma: PrismaClient;
  /** Headers of a lab manager (edits the vessel) and of a service credential (asks for the factor). */
  readonly manager: Record<string, string>;
  readonly service: Record<string, string>;
  /** A vessel to edit, and the current factor to ask for (its person and vessel). */
  readonly vesselId: string;
  readonly factor: { readonly id: string; readonly personId: string; readonly vesselId: string };
  readonly notes: string;
}

/** After the database came back: a write succeeds with its one audit entry, and the factor answers as before. */
export async function expectServesAgain(s: ServesAgain): Promise<void> {
  const requestId = randomUUID();
  const read = await call(s.baseUrl, 'GET', `/v1/vessels/${s.vesselId}`, s.manager);
  const write = await call(
    s.baseUrl,
    'PATCH',
    `/v1/vessels/${s.vesselId}`,
    { ...s.manager, 'if-match': read.ok ? (read.etag ?? '') : '', 'x-request-id': requestId },
    { notes: s.notes },
  );
  expect(write.ok && write.status).toBe(200);
  expect(await s.prisma.auditEntry.count({ where: { requestId } })).toBe(1);
  const lookup = await call(s.baseUrl, 'GET', `/v1/factors/current?personId=${s.factor.personId}&vesselId=${s.factor.vesselId}`, s.service);
  expect(lookup.ok && lookup.body.factorId).toBe(s.factor.id);
}
