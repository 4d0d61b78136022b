import { Module } from '@nestjs/common';

import { CalendarFeedController } from './calendar-feed.controller';
import { CalendarFeedService } from './calendar-feed.service';

/** iCalendar feeds of a lab's due dates, reached with a revocable token. */
@Module({ controllers: [CalendarFeedController], providers: [CalendarFeedService] })
export class CalendarFeedsModule {}
