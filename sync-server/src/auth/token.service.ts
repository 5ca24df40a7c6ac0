// Issues and rotates the credentials of a session: short-lived signed access tokens and opaque
// refresh tokens stored as SHA-256 only. A refresh token is spent when used; presenting a spent
// one again means it was copied, so the whole family is revoked.
import { EntityManager } from '@mikro-orm/postgresql';
import { Inject, Injectable } from '@nestjs/common';
import { JwtService } from '@nestjs/jwt';
import type { Role } from '@fuselight/shared';
import { CLOCK, IDS, type Clock, type IdGenerator } from '../common/clock.provider';
import { APP_CONFIG, type AppConfig } from '../config/app-config';
import { AuditService } from '../audit/audit.service';
import { AuthSession } from './auth-session.entity';
import type { AccessTokenClaims } from './auth-user';
import { RefreshToken } from './refresh-token.entity';
import { SECRETS, type Secrets } from './secrets.provider';

export interface SessionSubject {
  userId: string;
  role: Role;
  siteIds: string[];
  deviceId: string | null;
}

export interface IssuedTokens {
  accessToken: string;
  refreshToken: string;
  sessionId: string;
}

export type RotationResult =
  { session: AuthSession; refreshToken: string; refused?: undefined } | { refused: string };

export type RevocationReason =
  'logout' | 'refresh-reuse' | 'device-revoked' | 'device-reenrolled' | 'account-changed';

@Injectable()
export class TokenService {
  constructor(
    @Inject(JwtService) private readonly jwt: JwtService,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
    @Inject(CLOCK) private readonly clock: Clock,
    @Inject(IDS) private readonly ids: IdGenerator,
    @Inject(SECRETS) private readonly secrets: Secrets,
    @Inject(AuditService) private readonly audit: AuditService,
  ) {}

  /** Starts a session family for a person (on a tablet when deviceId is set). */
  async startSession(em: EntityManager, subject: SessionSubject): Promise<IssuedTokens> {
    const now = this.clock.now();
    const session = em.create(AuthSession, {
      id: this.ids.uuid(),
      userId: subject.userId,
      deviceId: subject.deviceId,
      createdAt: now,
      lastRefreshedAt: now,
      expiresAt: new Date(now.getTime() + this.config.refreshTokenTtlDays * 86_400_000),
      revokedAt: null,
      revokedReason: null,
    });
    // No ORM relation orders the inserts, so the session is written before its first token.
    await em.persist(session).flush();
    const refreshToken = this.newRefreshToken(em, session.id);
    await em.flush();
    return {
      accessToken: await this.signAccessToken(subject, session.id),
      refreshToken,
      sessionId: session.id,
    };
  }

  /**
   * Spends `presented` and returns the session it belongs to with a new refresh token. Reuse of
   * a spent token revokes the family; the refusal is returned, not thrown, so that revocation
   * commits with the caller's transaction even though the answer is a 401.
   */
  async rotate(em: EntityManager, presented: string): Promise<RotationResult> {
    const now = this.clock.now();
    const tokenHash = this.secrets.sha256(presented);
    const spent = await em.execute<{ session_id: string }[]>(
      `update "refresh_token" set "spent_at" = ? where "token_hash" = ? and "spent_at" is null returning "session_id"`,
      [now, tokenHash],
    );
    const sessionId = spent[0]?.session_id;
    if (!sessionId) {
      const known = await em.findOne(RefreshToken, { tokenHash });
      if (known) {
        await this.revokeSession(em, known.sessionId, 'refresh-reuse');
        const session = await em.findOne(AuthSession, { id: known.sessionId });
        await this.audit.record(em, {
          kind: 'auth.refresh_reuse',
          actorId: session?.userId ?? null,
          deviceId: session?.deviceId ?? null,
          subjectType: 'session',
          subjectId: known.sessionId,
          detail: { outcome: 'session revoked' },
        });
        return {
          refused:
            'This sign-in was ended because its refresh token was used twice; sign in again.',
        };
      }
      return { refused: 'This refresh token is not valid; sign in again.' };
    }
    const session = await em.findOneOrFail(AuthSession, { id: sessionId });
    if (session.revokedAt) return { refused: 'This sign-in has ended; sign in again.' };
    if (session.expiresAt.getTime() <= now.getTime()) {
      return { refused: 'This sign-in has expired; sign in again.' };
    }
    session.lastRefreshedAt = now;
    const refreshToken = this.newRefreshToken(em, session.id);
    await em.flush();
    return { session, refreshToken };
  }

  async signAccessToken(subject: SessionSubject, sessionId: string): Promise<string> {
    const claims: AccessTokenClaims & { iat: number } = {
      sub: subject.userId,
      role: subject.role,
      siteIds: subject.siteIds,
      deviceId: subject.deviceId,
      sessionId,
      // The injected clock sets issue and expiry times, so tests can move past the TTL.
      iat: Math.floor(this.clock.now().getTime() / 1000),
    };
    return this.jwt.signAsync(claims);
  }

  /** Ends a session family; every access token of it is refused on its next request. */
  async revokeSession(
    em: EntityManager,
    sessionId: string,
    reason: RevocationReason,
  ): Promise<void> {
    await em.execute(
      `update "auth_session" set "revoked_at" = ?, "revoked_reason" = ? where "id" = ? and "revoked_at" is null`,
      [this.clock.now(), reason, sessionId],
    );
  }

  async revokeSessionsOfUser(
    em: EntityManager,
    userId: string,
    reason: RevocationReason,
  ): Promise<void> {
    await em.execute(
      `update "auth_session" set "revoked_at" = ?, "revoked_reason" = ? where "user_id" = ? and "revoked_at" is null`,
      [this.clock.now(), reason, userId],
    );
  }

  async revokeSessionsOfDevice(
    em: EntityManager,
    deviceId: string,
    reason: RevocationReason,
  ): Promise<void> {
    await em.execute(
      `update "auth_session" set "revoked_at" = ?, "revoked_reason" = ? where "device_id" = ? and "revoked_at" is null`,
      [this.clock.now(), reason, deviceId],
    );
  }

  private newRefreshToken(em: EntityManager, sessionId: string): string {
    const token = this.secrets.randomToken(32);
    em.persist(
      em.create(RefreshToken, {
        id: this.ids.uuid(),
        sessionId,
        tokenHash: this.secrets.sha256(token),
        createdAt: this.clock.now(),
        spentAt: null,
      }),
    );
    return token;
  }
}
