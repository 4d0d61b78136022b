import { Module } from '@nestjs/common';

import { BalanceModule } from '../balances/balance.module';
import { InstrumentModule } from '../instruments/instrument.module';
import { ReferenceWeightModule } from '../reference-weights/reference-weight.module';
import { VesselModule } from '../vessels/vessel.module';

/** The lab inventory: vessels, balances, reference weights and environment instruments. */
@Module({ imports: [VesselModule, BalanceModule, ReferenceWeightModule, InstrumentModule] })
export class InventoryModule {}
