import type { Role } from '@fuselight/shared';

/** The claims of a Fuselight access token (signed with @nestjs/jwt). */
export interface AccessTokenClaims {
  sub: string;
  role: Role;
  siteIds: string[];
  /** The enrolled tablet this session is bound to, or null for a desk session. */
  deviceId: string | null;
  /** The refresh-token family this access token belongs to (revoked on logout or reuse). */
  sessionId: string;
}

/** The caller of a request, as the guard resolved it. */
export interface AuthUser {
  userId: string;
  role: Role;
  siteIds: string[];
  deviceId: string | null;
  sessionId: string;
}
