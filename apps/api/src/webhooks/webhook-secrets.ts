import { Inject, Injectable } from '@nestjs/common';

import { APP_CONFIG, type AppConfig } from '../config/config.schema';
import { DomainError } from '../common/problem/domain-error';
import { SecretBox } from './secret-box';

/** The configured SecretBox, or a clear refusal when WEBHOOK_SECRET_KEY is not set. */
@Injectable()
export class WebhookSecrets {
  private readonly box: SecretBox | null;

  constructor(@Inject(APP_CONFIG) config: AppConfig) {
    this.box = config.delivery.webhookSecretKey === null ? null : new SecretBox(config.delivery.webhookSecretKey);
  }

  /** For sending: null when no key is configured. */
  current(): SecretBox | null {
    return this.box;
  }

  /** For issuing a secret: refuses when no key is configured. */
  required(): SecretBox {
    if (this.box) return this.box;
    throw new DomainError(
      'webhooks-not-configured',
      'Webhook signing secrets are stored encrypted and this service has no key for that: set WEBHOOK_SECRET_KEY ' +
        '(32 random bytes in base64, e.g. `openssl rand -base64 32`) and restart.',
    );
  }
}
