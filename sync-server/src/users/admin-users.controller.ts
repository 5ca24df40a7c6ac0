import { Body, Controller, Get, Inject, Param, Patch, Post } from '@nestjs/common';
import { ApiOperation, ApiParam, ApiResponse, ApiTags } from '@nestjs/swagger';
import {
  adminUserListSchema,
  adminUserSchema,
  invitedPersonSchema,
  type AdminUser,
  type InvitedPerson,
} from '@fuselight/shared';
import { ApiSignedIn, ApiZodBody, ApiZodResponse } from '../auth/api-docs';
import { CurrentUser, Roles } from '../auth/auth.decorators';
import type { AuthUser } from '../auth/auth-user';
import { ZodValidationPipe, zodDto } from '../common/zod-validation.pipe';
import { inviteUserSchema, updateUserSchema, userIdParamSchema } from './users.schemas';
import { UsersService } from './users.service';

class InviteUserBody extends zodDto(inviteUserSchema) {}
class UpdateUserBody extends zodDto(updateUserSchema) {}

@ApiTags('people')
@ApiSignedIn()
@Roles('admin')
@Controller('admin/users')
export class AdminUsersController {
  constructor(@Inject(UsersService) private readonly users: UsersService) {}

  @Get()
  @ApiOperation({ summary: 'Everyone who can sign in, with role, sites and countersigning' })
  @ApiZodResponse(200, adminUserListSchema, 'Everyone, as adminUserSchema of @fuselight/shared')
  list(): Promise<AdminUser[]> {
    return this.users.list();
  }

  @Post()
  @ApiOperation({
    summary: 'Invite a person; the one-time initial password is shown only in this answer',
  })
  @ApiZodBody(inviteUserSchema)
  @ApiZodResponse(201, invitedPersonSchema, 'The person and their one-time initial password')
  @ApiResponse({ status: 409, description: 'The e-mail address is taken' })
  invite(@CurrentUser() admin: AuthUser, @Body() body: InviteUserBody): Promise<InvitedPerson> {
    return this.users.invite(admin, body);
  }

  @Patch(':id')
  @ApiOperation({
    summary:
      'Change role, sites, countersigning or name, or deactivate; ends the person’s sessions',
  })
  @ApiParam({ name: 'id', format: 'uuid' })
  @ApiZodBody(updateUserSchema)
  @ApiZodResponse(200, adminUserSchema, 'The person as changed')
  update(
    @CurrentUser() admin: AuthUser,
    @Param('id', new ZodValidationPipe(userIdParamSchema)) id: string,
    @Body() body: UpdateUserBody,
  ): Promise<AdminUser> {
    return this.users.update(admin, id, body);
  }
}
