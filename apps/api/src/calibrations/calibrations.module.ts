import { Module } from '@nestjs/common';

import { BalanceRepository } from '../balances/balance.repository';
import { FactorsModule } from '../factors/factors.module';
import { ImpactModule } from '../impact/impact.module';
import { InstrumentRepository } from '../instruments/instrument.repository';
import { VesselRepository } from '../vessels/vessel.repository';
import { CalibrationController } from './calibration.controller';
import { CalibrationRepository } from './calibration.repository';
import { CalibrationService } from './calibration.service';
import { CalibrationFactsRepository } from './calibration-facts.repository';
import { CalibrationItems } from './calibration-items';
import { CalibrationReview } from './calibration-review.service';
import { CalibrationSubmission } from './calibration-submission.service';
import { VesselImpact } from './vessel-impact';

/** Calibration records: drafts, submission with traceability rules and frozen results, review, void. */
@Module({
  imports: [FactorsModule, ImpactModule],
  controllers: [CalibrationController],
  providers: [
    CalibrationService,
    CalibrationSubmission,
    CalibrationReview,
    CalibrationRepository,
    CalibrationFactsRepository,
    CalibrationItems,
    VesselImpact,
    // The inventory's repositories, to read the items a calibration names.
    VesselRepository,
    BalanceRepository,
    InstrumentRepository,
  ],
})
export class CalibrationsModule {}
