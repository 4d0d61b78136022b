import { Injectable } from '@nestjs/common';

import type { Tx } from '../inventory/inventory-workflow';

@Injectable()
export class OutOfToleranceRepository {
  /** Serialises findings and status changes of one instrument until the transaction ends. */
  async lockInstrument(tx: Tx, instrumentId: string): Promise<void> {
    await tx.$queryRaw`SELECT id FROM instruments WHERE id = ${instrumentId}::uuid FOR UPDATE`;
  }

  async labTimeZone(tx: Tx, labId: string): Promise<string> {
    const lab = await tx.lab.findUniqueOrThrow({ where: { id: labId }, select: { timeZone: true } });
    return lab.timeZone;
  }
}
