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
import { ConflictsService } from './conflicts.service';

class ConflictListQueryDto extends zodDto(conflictListQuerySchema) {}
class ResolveConflictDto extends zodDto(resolveConflictRequestSchema) {}
class ConflictParamsDto extends zodDto(
  z.object({ id: z.uuid({ error: 'id must be a dispute id (a UUID)' }) }),
) {}

@Controller('conflicts')
@Roles('supervisor')
export class ConflictsController {
  constructor(@Inject(ConflictsService) private readonly conflicts: ConflictsService) {}

  @Get()
  list(
    @CurrentUser() user: AuthUser,
    @Query() query: ConflictListQueryDto,
  ): Promise<ConflictListResponse> {
    return this.conflicts.list(user, query);
  }

  @Post(':id/resolve')
  @HttpCode(200)
  resolve(
    @CurrentUser() user: AuthUser,
    @Param() params: ConflictParamsDto,
    @Body() body: ResolveConflictDto,
  ): Promise<ConflictItem> {
    return this.conflicts.resolve(user, params.id, body);
  }
}
