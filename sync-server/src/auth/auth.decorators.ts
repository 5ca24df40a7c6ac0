// Default deny (docs/conventions.md, boundary 5): every route needs a signed-in user unless marked
// @Public(); @Roles(...) narrows a route to the named roles; @CurrentUser() hands the caller to a
// handler.
import { SetMetadata, createParamDecorator, type ExecutionContext } from '@nestjs/common';
import type { Role } from '@fuselight/shared';
import type { AuthUser } from './auth-user';

export const IS_PUBLIC = 'fuselight:isPublic';
export const ROLES = 'fuselight:roles';
export const DEVICE_BOUND = 'fuselight:deviceBound';

export const Public = (): MethodDecorator & ClassDecorator => SetMetadata(IS_PUBLIC, true);
export const Roles = (...roles: Role[]): MethodDecorator & ClassDecorator =>
  SetMetadata(ROLES, roles);
/** Only tokens bound to an enrolled tablet may call this route (sync). */
export const DeviceBound = (): MethodDecorator & ClassDecorator => SetMetadata(DEVICE_BOUND, true);

export const CurrentUser = createParamDecorator(
  (_data: unknown, ctx: ExecutionContext): AuthUser => {
    const request = ctx.switchToHttp().getRequest<{ user?: AuthUser }>();
    if (!request.user) throw new Error('CurrentUser used on a route without authentication');
    return request.user;
  },
);
