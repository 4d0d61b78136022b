import { Module } from '@nestjs/common';

import { BalanceRepository } from '../balances/balance.repository';
import { ImpactModule } from '../impact/impact.module';
import { ReferenceWeightRepository } from '../reference-weights/reference-weight.repository';
import { BalanceCheckController } from './balance-check.controller';
import { BalanceCheckRepository } from './balance-check.repository';
import { BalanceCheckService } from './balance-check.service';
import { BalanceStatusKeeper } from './balance-status';
import { WeighingCorrectionController } from './weighing-correction.controller';
import { WeighingCorrectionService } from './weighing-correction.service';

/** Routine balance checks (status, minimum weight, impact of a failure) and buoyancy corrections of readings on a balance. */
@Module({
  imports: [ImpactModule],
  controllers: [BalanceCheckController, WeighingCorrectionController],
  providers: [
    BalanceRepository,
    ReferenceWeightRepository,
    BalanceCheckRepository,
    BalanceStatusKeeper,
    BalanceCheckService,
    WeighingCorrectionService,
  ],
})
export class BalanceChecksModule {}
