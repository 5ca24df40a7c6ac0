// The global guard: authenticates every request by its bearer token unless the route is
// @Public(), then enforces @Roles(...) and @DeviceBound().
import {
  ForbiddenException,
  Inject,
  Injectable,
  UnauthorizedException,
  type CanActivate,
  type ExecutionContext,
} from '@nestjs/common';
import { Reflector } from '@nestjs/core';
import { JwtService } from '@nestjs/jwt';
import type { Role } from '@fuselight/shared';
import { CLOCK, type Clock } from '../common/clock.provider';
import { DEVICE_BOUND, IS_PUBLIC, ROLES } from './auth.decorators';
import type { AccessTokenClaims, AuthUser } from './auth-user';
import { SESSION_CHECK, type SessionCheck } from './session-check';

@Injectable()
export class JwtAuthGuard implements CanActivate {
  constructor(
    @Inject(Reflector) private readonly reflector: Reflector,
    @Inject(JwtService) private readonly jwt: JwtService,
    @Inject(SESSION_CHECK) private readonly sessionCheck: SessionCheck,
    @Inject(CLOCK) private readonly clock: Clock,
  ) {}

  async canActivate(context: ExecutionContext): Promise<boolean> {
    const targets = [context.getHandler(), context.getClass()];
    if (this.reflector.getAllAndOverride<boolean>(IS_PUBLIC, targets)) return true;

    const request = context
      .switchToHttp()
      .getRequest<{ headers: Record<string, string | undefined>; user?: AuthUser }>();
    const header = request.headers.authorization ?? '';
    const match = /^Bearer (.+)$/.exec(header);
    if (!match?.[1]) throw new UnauthorizedException('Sign in first: no access token was sent.');

    let claims: AccessTokenClaims;
    try {
      // Expiry is judged by the injected clock, the same one that stamped `iat`.
      claims = await this.jwt.verifyAsync<AccessTokenClaims>(match[1], {
        clockTimestamp: Math.floor(this.clock.now().getTime() / 1000),
      });
    } catch {
      throw new UnauthorizedException('Your session has expired or is not valid; sign in again.');
    }
    // Revoked tablets, ended sessions and deactivated people are refused here.
    await this.sessionCheck.assertActive(claims);

    const user: AuthUser = {
      userId: claims.sub,
      role: claims.role,
      siteIds: claims.siteIds,
      deviceId: claims.deviceId,
      sessionId: claims.sessionId,
    };
    request.user = user;

    const roles = this.reflector.getAllAndOverride<Role[] | undefined>(ROLES, targets);
    if (roles && !roles.includes(user.role)) {
      throw new ForbiddenException(
        `This needs the role ${roles.join(' or ')}; you are signed in as ${user.role}.`,
      );
    }
    if (this.reflector.getAllAndOverride<boolean>(DEVICE_BOUND, targets) && !user.deviceId) {
      throw new ForbiddenException(
        'Only a session on an enrolled tablet may sync; enrol this tablet first.',
      );
    }
    return true;
  }
}
