// The Review desk's countersigning and record-history routes (its Disputes routes are the
// disputes module's): supervisors only, each scoped to the supervisor's sites by the
// services. Controllers are one-liners (docs/conventions.md).
import { Body, Controller, Get, Header, HttpCode, Inject, Param, Post } from '@nestjs/common';
import { ApiOperation, ApiResponse, ApiTags } from '@nestjs/swagger';
import { ApiSignedIn, ApiZodBody } from '../auth/api-docs';
import { CurrentUser, Roles } from '../auth/auth.decorators';
import type { AuthUser } from '../auth/auth-user';
import { ZodValidationPipe, zodDto } from '../common/zod-validation.pipe';
import { CountersignService } from './countersign.service';
import { RecordHistoryService } from './record-history.service';
import {
  collectionParamSchema,
  countersignVisitSchema,
  recordIdParamSchema,
  returnVisitSchema,
  visitIdParamSchema,
} from './review.schemas';
import {
  type CountersignItemView,
  type RecordHistoryView,
  type VisitReviewResult,
} from '@fuselight/shared';

class ReturnVisitBody extends zodDto(returnVisitSchema) {}
class CountersignBody extends zodDto(countersignVisitSchema) {}

@ApiTags('review')
@ApiSignedIn()
@Roles('supervisor')
@Controller('review')
export class ReviewController {
  constructor(
    @Inject(CountersignService) private readonly countersigning: CountersignService,
    @Inject(RecordHistoryService) private readonly histories: RecordHistoryService,
  ) {}

  @Get('countersign')
  @ApiOperation({
    summary: 'Visits signed by clinicians who need a countersignature, in your sites',
  })
  countersignQueue(@CurrentUser() user: AuthUser): Promise<{ items: CountersignItemView[] }> {
    return this.countersigning.queue(user);
  }

  @Post('visits/:id/countersign')
  @HttpCode(200)
  @ApiOperation({
    summary: 'Countersign a Signed visit (a new version of the visit stamped by you)',
  })
  @ApiZodBody(countersignVisitSchema)
  @ApiResponse({ status: 409, description: 'Not Signed, or open Disputes remain' })
  countersign(
    @CurrentUser() user: AuthUser,
    @Param('id', new ZodValidationPipe(visitIdParamSchema)) id: string,
    @Body() _body: CountersignBody,
  ): Promise<VisitReviewResult> {
    return this.countersigning.countersign(user, id);
  }

  @Post('visits/:id/return')
  @HttpCode(200)
  @ApiOperation({
    summary: 'Return a Signed visit to its author with a comment; it goes back to draft',
  })
  @ApiZodBody(returnVisitSchema)
  @ApiResponse({ status: 409, description: 'Not Signed' })
  returnVisit(
    @CurrentUser() user: AuthUser,
    @Param('id', new ZodValidationPipe(visitIdParamSchema)) id: string,
    @Body() body: ReturnVisitBody,
  ): Promise<VisitReviewResult> {
    return this.countersigning.returnToAuthor(user, id, body.comment);
  }

  @Get('records/:collection/:id/history')
  @ApiOperation({
    summary: 'Every value of every field over time, disputes, signatures and Addenda',
  })
  history(
    @CurrentUser() user: AuthUser,
    @Param('collection', new ZodValidationPipe(collectionParamSchema)) collection: string,
    @Param('id', new ZodValidationPipe(recordIdParamSchema)) id: string,
  ): Promise<RecordHistoryView> {
    return this.histories.history(user, collection, id);
  }

  @Get('records/:collection/:id/history.csv')
  @Header('content-type', 'text/csv; charset=utf-8')
  @ApiOperation({ summary: 'The record history as CSV' })
  historyCsv(
    @CurrentUser() user: AuthUser,
    @Param('collection', new ZodValidationPipe(collectionParamSchema)) collection: string,
    @Param('id', new ZodValidationPipe(recordIdParamSchema)) id: string,
  ): Promise<string> {
    return this.histories.csv(user, collection, id);
  }
}
