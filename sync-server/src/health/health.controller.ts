import { Controller, Get, Inject } from '@nestjs/common';
import { Public } from '../auth/auth.decorators';
import { HealthService, type HealthReport } from './health.service';

@Controller('health')
export class HealthController {
  constructor(@Inject(HealthService) private readonly health: HealthService) {}

  @Public()
  @Get()
  check(): Promise<HealthReport> {
    return this.health.check();
  }
}
