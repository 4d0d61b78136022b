import { Inject, Injectable, type OnApplicationShutdown } from '@nestjs/common';
import { createTransport, type Transporter } from 'nodemailer';

import { APP_CONFIG, type AppConfig } from '../config/config.schema';
import type { MailContent } from './notice-mail';

/** Sends e-mail through the SMTP server in SMTP_URL; absent (null transport) when it is unset. */
@Injectable()
export class Mailer implements OnApplicationShutdown {
  private transport: Transporter | null = null;

  constructor(@Inject(APP_CONFIG) private readonly config: AppConfig) {}

  get configured(): boolean {
    return this.config.delivery.smtp !== null;
  }

  /** Sends one message to one address; rejects with the SMTP server's answer when it refuses. */
  async send(to: string, content: MailContent): Promise<void> {
    const smtp = this.config.delivery.smtp;
    if (!smtp) throw new Error('e-mail is not configured (SMTP_URL is unset)');
    const timeout = this.config.delivery.timeoutMs;
    this.transport ??= createTransport({
      url: smtp.url,
      connectionTimeout: timeout,
      greetingTimeout: timeout,
      socketTimeout: timeout,
      disableFileAccess: true,
      disableUrlAccess: true,
    });
    await this.transport.sendMail({ from: smtp.from, to, subject: content.subject, text: content.text, html: content.html });
  }

  onApplicationShutdown(): void {
    this.transport?.close();
    this.transport = null;
  }
}
