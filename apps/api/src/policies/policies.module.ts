import { Module } from '@nestjs/common';

import { DuePolicyController } from './due-policy.controller';
import { DuePolicyRepository } from './due-policy.repository';
import { DuePolicyService } from './due-policy.service';

/** Recalibration policies and the log of interval changes. */
@Module({ controllers: [DuePolicyController], providers: [DuePolicyRepository, DuePolicyService] })
export class PoliciesModule {}
