import { Module } from '@nestjs/common';

import { NoticesModule } from '../notices/notices.module';
import { DueScheduler } from './due-scheduler';
import { IntervalReviewer } from './interval-reviewer';
import { NoticeRaiser } from './notice-raiser';

/** The in-process due-date scheduler (see DueScheduler). */
@Module({
  imports: [NoticesModule],
  providers: [IntervalReviewer, NoticeRaiser, DueScheduler],
  exports: [DueScheduler],
})
export class SchedulerModule {}
