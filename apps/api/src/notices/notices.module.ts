import { Module } from '@nestjs/common';

import { NoticeController } from './notice.controller';
import { DeliveryFanout } from '../deliveries/delivery-fanout';
import { NoticeFanout } from './notice-fanout';
import { NoticeRepository } from './notice.repository';
import { NoticeService } from './notice.service';

/** Stored notices (list, acknowledge) and the fan-out hook delivery channels plug into. */
@Module({
  controllers: [NoticeController],
  providers: [NoticeRepository, NoticeService, { provide: NoticeFanout, useClass: DeliveryFanout }],
  exports: [NoticeFanout],
})
export class NoticesModule {}
