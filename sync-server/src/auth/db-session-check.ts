// The real SESSION_CHECK: a validly signed access token is honoured only while its session
// family is live, its person active, and its tablet (if any) not revoked. One indexed query per
// request; nothing is cached in memory, so every server process agrees at once.
import { EntityManager } from '@mikro-orm/postgresql';
import { Inject, Injectable, UnauthorizedException } from '@nestjs/common';
import type { AccessTokenClaims } from './auth-user';
import { erasingRefusal } from './erase';
import type { SessionCheck } from './session-check';

interface SessionRow {
  user_id: string;
  device_id: string | null;
  revoked_at: Date | null;
  active: boolean;
  device_state: string | null;
}

@Injectable()
export class DbSessionCheck implements SessionCheck {
  constructor(@Inject(EntityManager) private readonly em: EntityManager) {}

  async assertActive(claims: AccessTokenClaims): Promise<void> {
    const rows = await this.em.fork().execute<SessionRow[]>(
      `select s."user_id", s."device_id", s."revoked_at", u."active", d."state" as "device_state"
         from "auth_session" s
         join "app_user" u on u."id" = s."user_id"
         left join "device" d on d."id" = s."device_id"
        where s."id" = ?`,
      [claims.sessionId],
    );
    const row = rows[0];
    if (
      !row ||
      row.user_id !== claims.sub ||
      (row.device_id ?? null) !== (claims.deviceId ?? null)
    ) {
      throw new UnauthorizedException('This session is not known to the server; sign in again.');
    }
    // A revoked tablet is told to erase even if its session was ended by the revocation itself.
    if (row.device_state === 'revoked') {
      throw erasingRefusal();
    }
    if (!row.active) throw new UnauthorizedException('This account has been deactivated.');
    if (row.revoked_at) throw new UnauthorizedException('This sign-in has ended; sign in again.');
  }
}
