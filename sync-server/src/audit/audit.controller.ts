import { Controller, Get, Inject, Query } from '@nestjs/common';
import { ApiOperation, ApiQuery, ApiResponse, ApiTags } from '@nestjs/swagger';
import { ApiSignedIn } from '../auth/api-docs';
import { CurrentUser, Roles } from '../auth/auth.decorators';
import type { AuthUser } from '../auth/auth-user';
import { zodDto } from '../common/zod-validation.pipe';
import { auditQuerySchema } from './audit-query.schema';
import { AuditReader, type AuditPage } from './audit-reader.service';

class AuditQueryDto extends zodDto(auditQuerySchema) {}

@ApiTags('audit')
@ApiSignedIn()
@Controller('audit')
export class AuditController {
  constructor(@Inject(AuditReader) private readonly reader: AuditReader) {}

  @Get()
  @Roles('admin', 'supervisor')
  @ApiOperation({
    summary:
      'The audit trail, newest first: account part for admins, clinical part (own sites) for supervisors',
  })
  @ApiQuery({ name: 'scope', enum: ['account', 'clinical'] })
  @ApiQuery({ name: 'cursor', required: false, description: '`next` of the previous page' })
  @ApiQuery({ name: 'limit', required: false, description: '1 to 200, default 100' })
  @ApiResponse({ status: 200, description: '{ items, next }' })
  list(@CurrentUser() user: AuthUser, @Query() query: AuditQueryDto): Promise<AuditPage> {
    return this.reader.page(user, query);
  }
}
