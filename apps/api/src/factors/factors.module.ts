import { Module } from '@nestjs/common';

import { FactorCorrectionService } from './factor-correction.service';
import { FactorIssuer } from './factor-issuer';
import { FactorLookupRepository } from './factor-lookup.repository';
import { FactorLookupService } from './factor-lookup.service';
import { FactorRepository } from './factor.repository';
import { FactorsController } from './factors.controller';
import { FactorsService } from './factors.service';

/** Personal factors: issued on approval, looked up and applied by people and other systems. */
@Module({
  controllers: [FactorsController],
  providers: [FactorIssuer, FactorRepository, FactorsService, FactorLookupRepository, FactorLookupService, FactorCorrectionService],
  exports: [FactorIssuer],
})
export class FactorsModule {}
