import { Body, Controller, Get, Header, HttpCode, Inject, Post, Req } from '@nestjs/common';
import { ApiOperation, ApiResponse, ApiTags } from '@nestjs/swagger';
import type { Request } from 'express';
import { ApiSignedIn, ApiZodBody } from '../auth/api-docs';
import { CurrentUser, DeviceBound, Public } from '../auth/auth.decorators';
import type { AuthUser } from '../auth/auth-user';
import { zodDto } from '../common/zod-validation.pipe';
import { enrolDeviceSchema, heartbeatSchema } from './devices.schemas';
import { DevicesService, type DeviceSelfView } from './devices.service';

class EnrolBody extends zodDto(enrolDeviceSchema) {}
class HeartbeatBody extends zodDto(heartbeatSchema) {}

@ApiTags('fleet')
@Controller('devices')
export class DevicesController {
  constructor(@Inject(DevicesService) private readonly devices: DevicesService) {}

  @Public()
  @Post('enrol')
  @HttpCode(200)
  @ApiOperation({ summary: 'Trade a single-use enrolment code for this tablet’s device secret' })
  @ApiZodBody(enrolDeviceSchema)
  @ApiResponse({ status: 200, description: '{ deviceId, deviceSecret }' })
  @ApiResponse({ status: 400, description: 'Unknown, used or expired code' })
  @ApiResponse({ status: 429, description: 'Too many failed enrolments from this address' })
  enrol(
    @Body() body: EnrolBody,
    @Req() req: Request,
  ): Promise<{ deviceId: string; deviceSecret: string }> {
    return this.devices.enrol(body.code, req.ip ?? 'unknown');
  }

  @Post('heartbeat')
  @HttpCode(200)
  @DeviceBound()
  @ApiSignedIn()
  @ApiOperation({ summary: 'Report app version and outbox size; answers the tablet’s state' })
  @ApiZodBody(heartbeatSchema)
  @ApiResponse({
    status: 200,
    description:
      '{ deviceId, label, state, siteIds, holdSiteIds, unsyncedWarningHours, unlockWithoutHardware }',
  })
  heartbeat(@CurrentUser() user: AuthUser, @Body() body: HeartbeatBody): Promise<DeviceSelfView> {
    return this.devices.heartbeat(user, body);
  }

  @Get('me/key-share')
  @DeviceBound()
  @ApiSignedIn()
  @Header('Cache-Control', 'no-store')
  @ApiOperation({
    summary: 'This tablet’s key share: an online sign-in opens its locked data key with it',
  })
  @ApiResponse({ status: 200, description: '{ share } (32 bytes, base64)' })
  @ApiResponse({ status: 403, description: 'Not a session on an enrolled, unrevoked tablet' })
  keyShare(@CurrentUser() user: AuthUser): Promise<{ share: string }> {
    return this.devices.keyShare(user);
  }

  @Get('me')
  @DeviceBound()
  @ApiSignedIn()
  @ApiOperation({ summary: 'This tablet’s state; `retired` means push the outbox, then erase' })
  @ApiResponse({
    status: 200,
    description:
      '{ deviceId, label, state, siteIds, holdSiteIds, unsyncedWarningHours, unlockWithoutHardware }',
  })
  me(@CurrentUser() user: AuthUser): Promise<DeviceSelfView> {
    return this.devices.self(user);
  }
}
