// Sign-in, refresh and sign-out. A sign-in that carries a tablet's device secret is bound to that
// tablet, and its sites are the person's sites that the tablet serves. Failed sign-ins are
// counted per account and per client address (in PostgreSQL, see AttemptLimiter) and answered
// with one message whether the e-mail is unknown or the password wrong.
import { EntityManager } from '@mikro-orm/postgresql';
import {
  ForbiddenException,
  Inject,
  Injectable,
  Logger,
  UnauthorizedException,
} from '@nestjs/common';
import type { LoginRequest, SessionUser } from '@fuselight/shared';
import { AuditService } from '../audit/audit.service';
import { CLOCK, type Clock } from '../common/clock.provider';
import { Device } from '../devices/device.entity';
import { siteIdsOfDevice, siteIdsOfUser } from '../users/memberships';
import { User } from '../users/user.entity';
import { AuthSession } from './auth-session.entity';
import type { AuthUser } from './auth-user';
import { ATTEMPT_LIMITS, AttemptLimiter } from './attempt-limiter.service';
import { erasingRefusal } from './erase';
import { SECRETS, type Secrets } from './secrets.provider';
import { TokenService } from './token.service';

export interface SignInResult {
  accessToken: string;
  refreshToken: string;
  user: SessionUser;
}

export interface RefreshResult {
  accessToken: string;
  refreshToken: string;
  user: SessionUser;
}

const WRONG_CREDENTIALS = 'That e-mail address and password do not match an active account.';

@Injectable()
export class AuthService {
  private readonly logger = new Logger('Auth');
  /** Verified against when the e-mail is unknown, so both failures take the same time. */
  private decoyHash: Promise<string> | null = null;

  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(CLOCK) private readonly clock: Clock,
    @Inject(SECRETS) private readonly secrets: Secrets,
    @Inject(TokenService) private readonly tokens: TokenService,
    @Inject(AttemptLimiter) private readonly limiter: AttemptLimiter,
    @Inject(AuditService) private readonly audit: AuditService,
  ) {}

  async signIn(request: LoginRequest, clientAddress: string): Promise<SignInResult> {
    const email = request.email.trim().toLowerCase();
    const accountKey = `sign-in:account:${email}`;
    const addressKey = `sign-in:address:${clientAddress}`;
    await this.limiter.assertAllowed(
      addressKey,
      ATTEMPT_LIMITS.signInPerAddress,
      'sign-ins from this address',
    );
    await this.limiter.assertAllowed(
      accountKey,
      ATTEMPT_LIMITS.signInPerAccount,
      'sign-ins for this account',
    );

    const em = this.em.fork();
    const user = await em.findOne(User, { email });
    const passwordOk = user
      ? await this.secrets.verifyPassword(user.passwordHash, request.password)
      : await this.secrets.verifyPassword(await this.decoy(), request.password);

    if (!user || !passwordOk || !user.active) {
      await this.limiter.recordFailure(accountKey, ATTEMPT_LIMITS.signInPerAccount);
      await this.limiter.recordFailure(addressKey, ATTEMPT_LIMITS.signInPerAddress);
      const reason = !user
        ? 'unknown e-mail'
        : !passwordOk
          ? 'wrong password'
          : 'account deactivated';
      await this.audit.record(em, {
        kind: 'auth.sign_in_failed',
        actorId: user?.id ?? null,
        subjectType: 'user',
        subjectId: user?.id ?? null,
        detail: { email, reason, clientAddress },
      });
      this.logger.warn(`Failed sign-in (${reason}) from ${clientAddress}`);
      throw new UnauthorizedException(WRONG_CREDENTIALS);
    }

    let device: Device | null = null;
    let siteIds = await siteIdsOfUser(em, user.id);
    if (request.deviceSecret !== undefined) {
      device = await em.findOne(Device, { secretHash: this.secrets.sha256(request.deviceSecret) });
      if (!device) {
        throw new UnauthorizedException(
          'deviceSecret: this tablet is not enrolled with this server; enrol it again with a code from an admin.',
        );
      }
      if (device.state === 'revoked') {
        throw erasingRefusal();
      }
      const deviceSites = new Set(await siteIdsOfDevice(em, device.id));
      siteIds = siteIds.filter((id) => deviceSites.has(id));
      if (siteIds.length === 0) {
        throw new ForbiddenException(
          'This tablet serves none of your sites; ask an admin to add your site to the tablet or use another tablet.',
        );
      }
      device.lastSeenAt = this.clock.now();
    }
    await this.limiter.clear(accountKey);

    return em.transactional(async (tem) => {
      user.lastSignInAt = this.clock.now();
      tem.persist(user);
      if (device) tem.persist(device);
      const issued = await this.tokens.startSession(tem, {
        userId: user.id,
        role: user.role,
        siteIds,
        deviceId: device?.id ?? null,
      });
      await this.audit.record(tem, {
        kind: 'auth.sign_in',
        actorId: user.id,
        deviceId: device?.id ?? null,
        subjectType: 'session',
        subjectId: issued.sessionId,
        detail: { clientAddress, onTablet: device !== null },
      });
      return {
        accessToken: issued.accessToken,
        refreshToken: issued.refreshToken,
        user: { id: user.id, name: user.name, email: user.email, role: user.role, siteIds },
      };
    });
  }

  async refresh(presented: string): Promise<RefreshResult> {
    const outcome = await this.em.fork().transactional(async (em) => {
      const rotated = await this.tokens.rotate(em, presented);
      if (rotated.refused !== undefined) return rotated;
      const { session } = rotated;
      const user = await em.findOneOrFail(User, { id: session.userId });
      if (!user.active) return { refused: WRONG_CREDENTIALS };
      let siteIds = await siteIdsOfUser(em, user.id);
      if (session.deviceId) {
        const device = await em.findOneOrFail(Device, { id: session.deviceId });
        if (device.state === 'revoked') return { refused: 'revoked-device' as const };
        const deviceSites = new Set(await siteIdsOfDevice(em, device.id));
        siteIds = siteIds.filter((id) => deviceSites.has(id));
        device.lastSeenAt = this.clock.now();
        await em.flush();
      }
      const subject = { userId: user.id, role: user.role, siteIds, deviceId: session.deviceId };
      return {
        accessToken: await this.tokens.signAccessToken(subject, session.id),
        refreshToken: rotated.refreshToken,
        user: { id: user.id, name: user.name, email: user.email, role: user.role, siteIds },
      };
    });
    if ('refused' in outcome && outcome.refused !== undefined) {
      if (outcome.refused === 'revoked-device') {
        throw erasingRefusal();
      }
      throw new UnauthorizedException(outcome.refused);
    }
    return outcome as RefreshResult;
  }

  async signOut(caller: AuthUser): Promise<void> {
    await this.em.fork().transactional(async (em) => {
      await this.tokens.revokeSession(em, caller.sessionId, 'logout');
      await this.audit.record(em, {
        kind: 'auth.sign_out',
        actorId: caller.userId,
        deviceId: caller.deviceId,
        subjectType: 'session',
        subjectId: caller.sessionId,
      });
    });
  }

  async sessionOf(caller: AuthUser): Promise<AuthSession | null> {
    return this.em.fork().findOne(AuthSession, { id: caller.sessionId });
  }

  private decoy(): Promise<string> {
    this.decoyHash ??= this.secrets.hashPassword(this.secrets.randomToken(16));
    return this.decoyHash;
  }
}
