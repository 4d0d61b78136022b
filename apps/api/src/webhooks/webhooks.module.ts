import { Module } from '@nestjs/common';

import { WebhookController } from './webhook.controller';
import { WebhookRepository } from './webhook.repository';
import { WebhookSecrets } from './webhook-secrets';
import { WebhookService } from './webhook.service';

/** A lab's webhook endpoints for notices and their sealed signing secrets. */
@Module({
  controllers: [WebhookController],
  providers: [WebhookRepository, WebhookSecrets, WebhookService],
  exports: [WebhookSecrets],
})
export class WebhooksModule {}
