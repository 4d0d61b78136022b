import { Module } from '@nestjs/common';

import { LabsController } from './labs.controller';
import { LabsRepository } from './labs.repository';
import { LabsService } from './labs.service';
import { MembershipsController } from './memberships.controller';
import { MembershipsRepository } from './memberships.repository';
import { MembershipsService } from './memberships.service';

/** Labs and who belongs to them. */
@Module({
  controllers: [LabsController, MembershipsController],
  providers: [LabsRepository, LabsService, MembershipsRepository, MembershipsService],
  exports: [LabsRepository],
})
export class LabsModule {}
