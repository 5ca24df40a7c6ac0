// Runs the mail worker loop in every server process (they share the outbox safely; see
// mail-outbox.repository.ts). Tests call MailService.runOnce themselves, so the loop does not run
// under NODE_ENV=test.
import {
  Inject,
  Injectable,
  Logger,
  type OnApplicationBootstrap,
  type OnApplicationShutdown,
} from '@nestjs/common';
import { APP_CONFIG, type AppConfig } from '../config/app-config';
import { MailService } from './mail.service';
import { MAIL_TRANSPORT, type MailTransport } from './mail-transport';

export const MAIL_POLL_MS = 5_000;

@Injectable()
export class MailWorker implements OnApplicationBootstrap, OnApplicationShutdown {
  private readonly logger = new Logger('MailWorker');
  private timer: NodeJS.Timeout | null = null;
  private running: Promise<unknown> | null = null;

  constructor(
    @Inject(APP_CONFIG) private readonly config: AppConfig,
    @Inject(MailService) private readonly mail: MailService,
    @Inject(MAIL_TRANSPORT) private readonly transport: MailTransport,
  ) {}

  onApplicationBootstrap(): void {
    if (this.config.env === 'test') return;
    this.timer = setInterval(() => {
      if (this.running) return;
      this.running = this.mail
        .runOnce()
        .catch((error: unknown) => this.logger.error(`mail run failed: ${String(error)}`))
        .finally(() => {
          this.running = null;
        });
    }, MAIL_POLL_MS);
    this.timer.unref();
  }

  async onApplicationShutdown(): Promise<void> {
    if (this.timer) clearInterval(this.timer);
    await this.running;
    this.transport.close();
  }
}
