import { Module } from '@nestjs/common';

import { InstrumentRepository } from '../instruments/instrument.repository';
import { ImpactRepository } from './impact.repository';
import { ImpactService } from './impact.service';
import { OutOfToleranceController } from './out-of-tolerance.controller';
import { OutOfToleranceRepository } from './out-of-tolerance.repository';
import { OutOfToleranceService } from './out-of-tolerance.service';

/**
 * The impact of equipment found out of tolerance (balances, thermometers,
 * vessels): which calibrations and factors it touches, marked for review.
 * Other features import this module and call ImpactService in their own
 * transaction; instruments are reported here (POST /v1/instruments/:id/out-of-tolerance).
 */
@Module({
  controllers: [OutOfToleranceController],
  providers: [ImpactRepository, ImpactService, InstrumentRepository, OutOfToleranceRepository, OutOfToleranceService],
  exports: [ImpactService],
})
export class ImpactModule {}
