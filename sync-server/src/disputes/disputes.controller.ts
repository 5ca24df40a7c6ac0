import { Body, Controller, Get, HttpCode, Inject, Param, Post, Query } from '@nestjs/common';
import { z } from 'zod';
import {
  conflictListQuerySchema,
  resolveConflictRequestSchema,
  type ConflictItem,
  type ConflictListResponse,
} from '@fuselight/shared';
import { CurrentUser, Roles } from '../auth/auth.decorators';
import type { AuthUser } from '../auth/auth-user';
import { zodDto } from '../common/zod-validation.pipe';
import { DisputeResolutionService } from './dispute-resolution.service';
import { disputeIdParamSchema } from './dispute.schemas';

class DisputeListQueryDto extends zodDto(conflictListQuerySchema) {}
class ResolveDisputeDto extends zodDto(resolveConflictRequestSchema) {}
class DisputeParamsDto extends zodDto(z.object({ id: disputeIdParamSchema })) {}

// Disputes as tablets and the Review desk reach them: `conflicts` on the wire.
@Controller('conflicts')
@Roles('supervisor')
export class DisputesController {
  constructor(
    @Inject(DisputeResolutionService) private readonly disputes: DisputeResolutionService,
  ) {}

  @Get()
  list(
    @CurrentUser() user: AuthUser,
    @Query() query: DisputeListQueryDto,
  ): Promise<ConflictListResponse> {
    return this.disputes.list(user, query);
  }

  @Post(':id/resolve')
  @HttpCode(200)
  resolve(
    @CurrentUser() user: AuthUser,
    @Param() params: DisputeParamsDto,
    @Body() body: ResolveDisputeDto,
  ): Promise<ConflictItem> {
    return this.disputes.resolve(user, params.id, body);
  }
}
