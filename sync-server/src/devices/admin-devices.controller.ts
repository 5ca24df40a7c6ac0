import { Body, Controller, Get, HttpCode, Inject, Param, Patch, Post } from '@nestjs/common';
import { ApiOperation, ApiParam, ApiResponse, ApiTags } from '@nestjs/swagger';
import { fleetDeviceListSchema, fleetDeviceSchema, type FleetDevice } from '@fuselight/shared';
import { ApiSignedIn, ApiZodBody, ApiZodResponse } from '../auth/api-docs';
import { CurrentUser, Roles } from '../auth/auth.decorators';
import type { AuthUser } from '../auth/auth-user';
import { ZodValidationPipe, zodDto } from '../common/zod-validation.pipe';
import {
  changeDeviceSitesSchema,
  deviceIdParamSchema,
  registerDeviceSchema,
} from './devices.schemas';
import { DevicesService, type EnrolmentTicket } from './devices.service';

class RegisterDeviceBody extends zodDto(registerDeviceSchema) {}
class ChangeDeviceSitesBody extends zodDto(changeDeviceSitesSchema) {}
const DeviceId = new ZodValidationPipe(deviceIdParamSchema);

@ApiTags('fleet')
@ApiSignedIn()
@Roles('admin')
@Controller('admin/devices')
export class AdminDevicesController {
  constructor(@Inject(DevicesService) private readonly devices: DevicesService) {}

  @Post()
  @ApiOperation({
    summary: 'Register a tablet for some sites; returns its single-use enrolment code (24 h)',
  })
  @ApiZodBody(registerDeviceSchema)
  @ApiResponse({ status: 201, description: '{ deviceId, enrolmentCode, expiresAt, qrPayload }' })
  register(
    @CurrentUser() admin: AuthUser,
    @Body() body: RegisterDeviceBody,
  ): Promise<EnrolmentTicket> {
    return this.devices.register(admin, body);
  }

  @Get()
  @ApiOperation({
    summary: 'The Fleet: every tablet with its state, last contact, app version and outbox size',
  })
  @ApiZodResponse(
    200,
    fleetDeviceListSchema,
    'Every tablet, as fleetDeviceSchema of @fuselight/shared',
  )
  list(): Promise<FleetDevice[]> {
    return this.devices.list();
  }

  @Patch(':id/sites')
  @ApiOperation({
    summary:
      'Change the sites a tablet serves; a site taken off is removed from the tablet at its next contact',
  })
  @ApiParam({ name: 'id', format: 'uuid' })
  @ApiZodBody(changeDeviceSitesSchema)
  @ApiZodResponse(200, fleetDeviceSchema, 'The tablet as changed')
  @ApiResponse({ status: 409, description: 'The tablet is revoked or retired' })
  changeSites(
    @CurrentUser() admin: AuthUser,
    @Param('id', DeviceId) id: string,
    @Body() body: ChangeDeviceSitesBody,
  ): Promise<FleetDevice> {
    return this.devices.changeSites(admin, id, body);
  }

  @Post(':id/enrolment-code')
  @ApiOperation({ summary: 'Issue a new enrolment code (re-enrolling replaces the tablet secret)' })
  @ApiParam({ name: 'id', format: 'uuid' })
  @ApiResponse({ status: 201, description: '{ deviceId, enrolmentCode, expiresAt, qrPayload }' })
  reissue(
    @CurrentUser() admin: AuthUser,
    @Param('id', DeviceId) id: string,
  ): Promise<EnrolmentTicket> {
    return this.devices.reissueCode(admin, id);
  }

  @Post(':id/revoke')
  @HttpCode(200)
  @ApiOperation({ summary: 'Revoke a lost or stolen tablet: refused at once and told to erase' })
  @ApiParam({ name: 'id', format: 'uuid' })
  @ApiZodResponse(200, fleetDeviceSchema, 'The tablet as changed')
  @ApiResponse({ status: 409, description: 'Already revoked' })
  revoke(@CurrentUser() admin: AuthUser, @Param('id', DeviceId) id: string): Promise<FleetDevice> {
    return this.devices.revoke(admin, id);
  }

  @Post(':id/retire')
  @HttpCode(200)
  @ApiOperation({ summary: 'Retire a tablet: it may still push its outbox, then erases itself' })
  @ApiParam({ name: 'id', format: 'uuid' })
  @ApiZodResponse(200, fleetDeviceSchema, 'The tablet as changed')
  @ApiResponse({ status: 409, description: 'Already retired or revoked' })
  retire(@CurrentUser() admin: AuthUser, @Param('id', DeviceId) id: string): Promise<FleetDevice> {
    return this.devices.retire(admin, id);
  }
}
