// Runs the FHIR hand-off loop in every server process when FHIR_BASE_URL is set (the processes
// share the outbox safely; see fhir-outbox.repository.ts). Tests call FhirHandoffService.runOnce
// themselves, so the loop does not run under NODE_ENV=test.
import {
  Inject,
  Injectable,
  Logger,
  type OnApplicationBootstrap,
  type OnApplicationShutdown,
} from '@nestjs/common';
import { APP_CONFIG, type AppConfig } from '../config/app-config';
import { FhirHandoffService } from './fhir-handoff.service';

export const HANDOFF_POLL_MS = 5_000;

@Injectable()
export class FhirHandoffWorker implements OnApplicationBootstrap, OnApplicationShutdown {
  private readonly logger = new Logger('FhirHandoffWorker');
  private timer: NodeJS.Timeout | null = null;
  private running: Promise<unknown> | null = null;

  constructor(
    @Inject(APP_CONFIG) private readonly config: AppConfig,
    @Inject(FhirHandoffService) private readonly handoff: FhirHandoffService,
  ) {}

  onApplicationBootstrap(): void {
    if (this.config.env === 'test' || this.config.fhirBaseUrl === null) return;
    this.timer = setInterval(() => {
      if (this.running) return;
      this.running = this.handoff
        .runOnce()
        .catch((error: unknown) => this.logger.error(`hand-off run failed: ${String(error)}`))
        .finally(() => {
          this.running = null;
        });
    }, HANDOFF_POLL_MS);
    this.timer.unref();
  }

  async onApplicationShutdown(): Promise<void> {
    if (this.timer) clearInterval(this.timer);
    await this.running;
  }
}
