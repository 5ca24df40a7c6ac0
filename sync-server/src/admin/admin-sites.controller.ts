import { Body, Controller, Get, Inject, Param, Patch, Post } from '@nestjs/common';
import { ApiOperation, ApiParam, ApiResponse, ApiTags } from '@nestjs/swagger';
import { ApiSignedIn, ApiZodBody } from '../auth/api-docs';
import { CurrentUser, Roles } from '../auth/auth.decorators';
import type { AuthUser } from '../auth/auth-user';
import { ZodValidationPipe, zodDto } from '../common/zod-validation.pipe';
import { createSiteSchema, siteIdParamSchema, updateSiteSchema } from './admin-sites.schemas';
import { AdminSitesService, type SiteView } from './admin-sites.service';

class CreateSiteBody extends zodDto(createSiteSchema) {}
class UpdateSiteBody extends zodDto(updateSiteSchema) {}

@ApiTags('sites')
@ApiSignedIn()
@Roles('admin')
@Controller('admin/sites')
export class AdminSitesController {
  constructor(@Inject(AdminSitesService) private readonly sites: AdminSitesService) {}

  @Get()
  @ApiOperation({ summary: 'Every clinic and outreach site' })
  @ApiResponse({ status: 200, description: 'SiteView[]' })
  list(): Promise<SiteView[]> {
    return this.sites.list();
  }

  @Post()
  @ApiOperation({ summary: 'Add a clinic or outreach site' })
  @ApiZodBody(createSiteSchema)
  @ApiResponse({ status: 201, description: 'SiteView' })
  create(@CurrentUser() admin: AuthUser, @Body() body: CreateSiteBody): Promise<SiteView> {
    return this.sites.create(admin, body);
  }

  @Patch(':id')
  @ApiOperation({ summary: 'Rename a site or change its kind, address or time zone' })
  @ApiParam({ name: 'id', format: 'uuid' })
  @ApiZodBody(updateSiteSchema)
  @ApiResponse({ status: 200, description: 'SiteView' })
  update(
    @CurrentUser() admin: AuthUser,
    @Param('id', new ZodValidationPipe(siteIdParamSchema)) id: string,
    @Body() body: UpdateSiteBody,
  ): Promise<SiteView> {
    return this.sites.update(admin, id, body);
  }
}
