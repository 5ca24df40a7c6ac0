import type { AccessTokenClaims } from './auth-user';

export const SESSION_CHECK = Symbol('SESSION_CHECK');

/** Decides whether a validly signed token still belongs to a live session and tablet. */
export interface SessionCheck {
  /** Throws UnauthorizedException when the session, person or tablet is no longer active. */
  assertActive(claims: AccessTokenClaims): Promise<void>;
}
