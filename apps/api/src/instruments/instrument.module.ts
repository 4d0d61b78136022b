import { Module } from '@nestjs/common';

import { InventoryWorkflow } from '../inventory/inventory-workflow';
import { InstrumentController } from './instrument.controller';
import { InstrumentRepository } from './instrument.repository';
import { InstrumentService } from './instrument.service';

@Module({ controllers: [InstrumentController], providers: [InventoryWorkflow, InstrumentService, InstrumentRepository] })
export class InstrumentModule {}
