// The Review desk's Disputes routes (the tab's counts, the Disputes list and one dispute):
// supervisors only, each scoped to the supervisor's sites by the service. Resolving goes through
// POST /api/conflicts/:id/resolve (DisputesController). Controllers are one-liners
// (docs/conventions.md).
import { Controller, Get, Inject, Param, Query } from '@nestjs/common';
import { ApiOperation, ApiResponse, ApiTags } from '@nestjs/swagger';
import {
  disputeQuerySchema,
  type DisputeDetailView,
  type DisputePageView,
  type ReviewSummary,
} from '@fuselight/shared';
import { ApiSignedIn } from '../auth/api-docs';
import { CurrentUser, Roles } from '../auth/auth.decorators';
import type { AuthUser } from '../auth/auth-user';
import { ZodValidationPipe, zodDto } from '../common/zod-validation.pipe';
import { DisputeDeskService } from './dispute-desk.service';
import { disputeIdParamSchema } from './dispute.schemas';

class DisputeQueryParams extends zodDto(disputeQuerySchema) {}

@ApiTags('review')
@ApiSignedIn()
@Roles('supervisor')
@Controller('review')
export class DisputeDeskController {
  constructor(@Inject(DisputeDeskService) private readonly disputes: DisputeDeskService) {}

  @Get('summary')
  @ApiOperation({
    summary: 'Counts for the Review desk tab: open Disputes and visits awaiting countersignature',
  })
  summary(@CurrentUser() user: AuthUser): Promise<ReviewSummary> {
    return this.disputes.summary(user);
  }

  @Get('disputes')
  @ApiOperation({
    summary: 'Open Disputes in your sites with patient, visit and site; filtered, sorted, paged',
  })
  listDisputes(
    @CurrentUser() user: AuthUser,
    @Query() query: DisputeQueryParams,
  ): Promise<DisputePageView> {
    return this.disputes.list(user, query);
  }

  @Get('disputes/:id')
  @ApiOperation({ summary: 'One dispute with its candidates named and the record around it' })
  @ApiResponse({ status: 404, description: 'No such dispute' })
  dispute(
    @CurrentUser() user: AuthUser,
    @Param('id', new ZodValidationPipe(disputeIdParamSchema)) id: string,
  ): Promise<DisputeDetailView> {
    return this.disputes.detail(user, id);
  }
}
