import { Module } from '@nestjs/common';

import { DueController } from './due.controller';
import { DueRepository } from './due.repository';
import { DueService } from './due.service';

/** Computed due dates (kept by the database) and the list of what falls due. */
@Module({
  controllers: [DueController],
  providers: [DueRepository, DueService],
  exports: [DueRepository],
})
export class DueModule {}
