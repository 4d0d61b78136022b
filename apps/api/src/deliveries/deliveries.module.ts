import { Module } from '@nestjs/common';

import { Mailer } from '../mail/mailer';
import { WebhooksModule } from '../webhooks/webhooks.module';
import { DeliveryController } from './delivery.controller';
import { DeliveryFanout } from './delivery-fanout';
import { DeliveryRepository } from './delivery.repository';
import { DeliveryService } from './delivery.service';
import { DeliveryWorker } from './delivery-worker';

/**
 * Delivery of notices by webhook and e-mail: the fan-out the scheduler calls
 * (as its NoticeFanout), the worker that sends, and the delivery log.
 */
@Module({
  imports: [WebhooksModule],
  controllers: [DeliveryController],
  providers: [DeliveryRepository, DeliveryService, DeliveryWorker, DeliveryFanout, Mailer],
  exports: [DeliveryFanout, DeliveryWorker],
})
export class DeliveriesModule {}
