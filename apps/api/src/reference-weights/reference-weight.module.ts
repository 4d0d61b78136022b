import { Module } from '@nestjs/common';

import { InventoryWorkflow } from '../inventory/inventory-workflow';
import { ReferenceWeightController } from './reference-weight.controller';
import { ReferenceWeightRepository } from './reference-weight.repository';
import { ReferenceWeightService } from './reference-weight.service';

@Module({
  controllers: [ReferenceWeightController],
  providers: [InventoryWorkflow, ReferenceWeightService, ReferenceWeightRepository],
})
export class ReferenceWeightModule {}
