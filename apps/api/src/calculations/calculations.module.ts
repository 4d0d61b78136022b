import { Module } from '@nestjs/common';

import { BalanceCheckService } from './balance-check.service';
import { CalculationsController } from './calculations.controller';
import { CalculationsService } from './calculations.service';
import { GravimetricService } from './gravimetric.service';

/** Stateless calculation endpoints over libs/metrology: no database, no state. */
@Module({ controllers: [CalculationsController], providers: [CalculationsService, GravimetricService, BalanceCheckService] })
export class CalculationsModule {}
