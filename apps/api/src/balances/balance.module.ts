import { Module } from '@nestjs/common';

import { InventoryWorkflow } from '../inventory/inventory-workflow';
import { BalanceController } from './balance.controller';
import { BalanceRepository } from './balance.repository';
import { BalanceService } from './balance.service';

@Module({ controllers: [BalanceController], providers: [InventoryWorkflow, BalanceService, BalanceRepository] })
export class BalanceModule {}
