import { Body, Controller, Get, HttpCode, Inject, Post } from '@nestjs/common';
import { ApiOperation, ApiResponse, ApiTags } from '@nestjs/swagger';
import { ApiSignedIn, ApiZodBody } from '../auth/api-docs';
import { CurrentUser } from '../auth/auth.decorators';
import type { AuthUser } from '../auth/auth-user';
import { zodDto } from '../common/zod-validation.pipe';
import { changePasswordSchema } from './users.schemas';
import { UsersService, type ColleagueView, type MeView, type MySiteView } from './users.service';

class ChangePasswordBody extends zodDto(changePasswordSchema) {}

@ApiTags('people')
@ApiSignedIn()
@Controller('me')
export class MeController {
  constructor(@Inject(UsersService) private readonly users: UsersService) {}

  @Get()
  @ApiOperation({ summary: 'The signed-in person and the sites of this session' })
  @ApiResponse({ status: 200, description: 'MeView' })
  me(@CurrentUser() user: AuthUser): Promise<MeView> {
    return this.users.me(user);
  }

  @Get('sites')
  @ApiOperation({
    summary:
      'The sites you belong to, with their names (for the site picker); any signed-in person, admins included',
  })
  @ApiResponse({
    status: 200,
    description:
      'MySiteView[]: { id, name, kind (clinic | outreach), timeZone, address (string or null) }, by name',
  })
  sites(@CurrentUser() user: AuthUser): Promise<MySiteView[]> {
    return this.users.mySites(user);
  }

  @Get('colleagues')
  @ApiOperation({
    summary:
      'The people who share a site with you (you included), so a tablet can name who signed, countersigned or wrote an addendum',
  })
  @ApiResponse({ status: 200, description: 'ColleagueView[]: { id, name, role }, by name' })
  colleagues(@CurrentUser() user: AuthUser): Promise<ColleagueView[]> {
    return this.users.colleagues(user);
  }

  @Post('password')
  @HttpCode(204)
  @ApiOperation({ summary: 'Change your own password (required after an invitation)' })
  @ApiZodBody(changePasswordSchema)
  @ApiResponse({ status: 204, description: 'Changed' })
  changePassword(@CurrentUser() user: AuthUser, @Body() body: ChangePasswordBody): Promise<void> {
    return this.users.changePassword(user, body);
  }
}
