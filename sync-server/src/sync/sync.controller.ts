import { Body, Controller, Get, HttpCode, Inject, Post, Query } from '@nestjs/common';
import type { PullResponse, PushResponse } from '@fuselight/shared';
import { CurrentUser, DeviceBound } from '../auth/auth.decorators';
import type { AuthUser } from '../auth/auth-user';
import { SyncService } from './sync.service';

/** Sync protocol 1. Bodies are checked in the service: a push's 413/400/426/409 come in an order. */
@Controller('sync')
@DeviceBound()
export class SyncController {
  constructor(@Inject(SyncService) private readonly sync: SyncService) {}

  @Post('push')
  @HttpCode(200)
  push(@CurrentUser() user: AuthUser, @Body() body: unknown): Promise<PushResponse> {
    return this.sync.push(user, body);
  }

  @Get('pull')
  pull(@CurrentUser() user: AuthUser, @Query() query: unknown): Promise<PullResponse> {
    return this.sync.pull(user, query);
  }
}
