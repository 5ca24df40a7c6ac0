import { Body, Controller, Get, Inject, Patch } from '@nestjs/common';
import { ApiOperation, ApiResponse, ApiTags } from '@nestjs/swagger';
import { updateClinicSettingsSchema, type ClinicSettings } from '@fuselight/shared';
import { ApiSignedIn, ApiZodBody } from '../auth/api-docs';
import { CurrentUser, Roles } from '../auth/auth.decorators';
import type { AuthUser } from '../auth/auth-user';
import { zodDto } from '../common/zod-validation.pipe';
import { ClinicSettingsService } from './clinic-settings.service';

class UpdateClinicSettingsBody extends zodDto(updateClinicSettingsSchema) {}

@ApiTags('settings')
@ApiSignedIn()
@Roles('admin')
@Controller('admin/settings')
export class AdminSettingsController {
  constructor(@Inject(ClinicSettingsService) private readonly settings: ClinicSettingsService) {}

  @Get()
  @ApiOperation({ summary: 'The clinic’s settings, defaults included' })
  @ApiResponse({ status: 200, description: 'ClinicSettings' })
  read(): Promise<ClinicSettings> {
    return this.settings.read();
  }

  @Patch()
  @ApiOperation({ summary: 'Change some of the clinic’s settings (audited)' })
  @ApiZodBody(updateClinicSettingsSchema)
  @ApiResponse({ status: 200, description: 'ClinicSettings' })
  update(
    @CurrentUser() admin: AuthUser,
    @Body() body: UpdateClinicSettingsBody,
  ): Promise<ClinicSettings> {
    return this.settings.update(admin, body);
  }
}
