import { Body, Controller, HttpCode, Inject, Post, Req } from '@nestjs/common';
import { ApiOperation, ApiResponse, ApiTags } from '@nestjs/swagger';
import type { Request } from 'express';
import { loginRequestSchema } from '@fuselight/shared';
import { zodDto } from '../common/zod-validation.pipe';
import { ApiSignedIn, ApiZodBody } from './api-docs';
import { CurrentUser, Public } from './auth.decorators';
import { refreshRequestSchema } from './auth.schemas';
import { AuthService, type RefreshResult, type SignInResult } from './auth.service';
import type { AuthUser } from './auth-user';

class LoginBody extends zodDto(loginRequestSchema) {}
class RefreshBody extends zodDto(refreshRequestSchema) {}

@ApiTags('auth')
@Controller('auth')
export class AuthController {
  constructor(@Inject(AuthService) private readonly auth: AuthService) {}

  @Public()
  @Post('login')
  @HttpCode(200)
  @ApiOperation({
    summary: 'Sign in; with deviceSecret the session is bound to that enrolled tablet',
  })
  @ApiZodBody(loginRequestSchema)
  @ApiResponse({ status: 200, description: '{ accessToken, refreshToken, user }' })
  @ApiResponse({ status: 401, description: 'Wrong e-mail or password (one message for both)' })
  @ApiResponse({ status: 429, description: 'Too many failed sign-ins for this account or address' })
  login(@Body() body: LoginBody, @Req() req: Request): Promise<SignInResult> {
    return this.auth.signIn(body, req.ip ?? 'unknown');
  }

  @Public()
  @Post('refresh')
  @HttpCode(200)
  @ApiOperation({
    summary: 'Swap a refresh token for a new pair; reusing a spent one ends the sign-in',
  })
  @ApiZodBody(refreshRequestSchema)
  @ApiResponse({ status: 200, description: '{ accessToken, refreshToken, user }' })
  @ApiResponse({ status: 401, description: 'Unknown, spent, expired or ended' })
  refresh(@Body() body: RefreshBody): Promise<RefreshResult> {
    return this.auth.refresh(body.refreshToken);
  }

  @Post('logout')
  @HttpCode(204)
  @ApiSignedIn()
  @ApiOperation({ summary: 'End this sign-in: its refresh and access tokens stop working' })
  @ApiResponse({ status: 204, description: 'Signed out' })
  logout(@CurrentUser() user: AuthUser): Promise<void> {
    return this.auth.signOut(user);
  }
}
