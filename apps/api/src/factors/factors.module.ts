import { Module } from '@nestjs/common';

import { FactorIssuer } from './factor-issuer';

/** Personal factors: issued on approval, looked up and applied by people and other systems. */
@Module({ providers: [FactorIssuer], exports: [FactorIssuer] })
export class FactorsModule {}
