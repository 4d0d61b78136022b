import { Module } from '@nestjs/common';

import { InventoryWorkflow } from '../inventory/inventory-workflow';
import { VesselController } from './vessel.controller';
import { VesselRepository } from './vessel.repository';
import { VesselService } from './vessel.service';
import { VesselImportRepository } from './vessel-import.repository';
import { VesselImportService } from './vessel-import.service';

@Module({
  controllers: [VesselController],
  providers: [InventoryWorkflow, VesselService, VesselRepository, VesselImportService, VesselImportRepository],
})
export class VesselModule {}
