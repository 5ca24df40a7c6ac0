// People: admins invite them (with a one-time initial password), change their role, sites and
// countersigning, and deactivate them. Any change to what a person may do ends their sessions,
// so the next request signs in again with fresh claims. One active admin always remains.
import { EntityManager } from '@mikro-orm/postgresql';
import {
  BadRequestException,
  ConflictException,
  Inject,
  Injectable,
  NotFoundException,
  UnauthorizedException,
} from '@nestjs/common';
import type { AdminUser, InvitedPerson, Role } from '@fuselight/shared';
import type { z } from 'zod';
import { AuditService } from '../audit/audit.service';
import type { AuthUser } from '../auth/auth-user';
import { SECRETS, type Secrets } from '../auth/secrets.provider';
import { TokenService } from '../auth/token.service';
import { CLOCK, IDS, type Clock, type IdGenerator } from '../common/clock.provider';
import { assertSitesExist, replaceUserSites, siteIdsOfUser, siteIdsOfUsers } from './memberships';
import { User } from './user.entity';
import { Site, type SiteKind } from '../sites/site.entity';
import type { changePasswordSchema, inviteUserSchema, updateUserSchema } from './users.schemas';

export interface MeView {
  id: string;
  name: string;
  email: string;
  role: Role;
  /** The sites of this session (on a tablet: the person's sites the tablet serves). */
  siteIds: string[];
  needsCountersign: boolean;
  mustChangePassword: boolean;
  deviceId: string | null;
}

/** A site the signed-in person belongs to, with what a clinician needs to recognise it. */
export interface MySiteView {
  id: string;
  name: string;
  kind: SiteKind;
  timeZone: string;
  /** As the admin entered it (lines split at commas or newlines); null when none is set. */
  address: string | null;
}

/** Someone who shares a site with the caller: what a tablet needs to name who signed what. */
export interface ColleagueView {
  id: string;
  name: string;
  role: Role;
}

export interface NewPersonInput {
  id?: string;
  name: string;
  email: string;
  role: Role;
  siteIds: string[];
  needsCountersign?: boolean;
  /** Set for seeds and tests; otherwise a one-time password is generated. */
  password?: string;
}

@Injectable()
export class UsersService {
  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(CLOCK) private readonly clock: Clock,
    @Inject(IDS) private readonly ids: IdGenerator,
    @Inject(SECRETS) private readonly secrets: Secrets,
    @Inject(AuditService) private readonly audit: AuditService,
    @Inject(TokenService) private readonly tokens: TokenService,
  ) {}

  async list(): Promise<AdminUser[]> {
    const em = this.em.fork();
    const users = await em.find(User, {}, { orderBy: { name: 'asc', id: 'asc' } });
    const sites = await siteIdsOfUsers(
      em,
      users.map((user) => user.id),
    );
    return users.map((user) => this.view(user, sites.get(user.id) ?? []));
  }

  /** Invites a person; the initial password is returned once and must be changed at first use. */
  async invite(
    admin: Pick<AuthUser, 'userId'> | null,
    input: z.infer<typeof inviteUserSchema>,
  ): Promise<InvitedPerson> {
    const initialPassword = this.secrets.randomToken(12);
    const user = await this.create(admin, { ...input, password: initialPassword }, true);
    return { user, initialPassword };
  }

  /** Creates a person with a known password (demo seed, test factories, invitations). */
  async create(
    admin: Pick<AuthUser, 'userId'> | null,
    input: NewPersonInput,
    mustChangePassword = false,
  ): Promise<AdminUser> {
    const email = input.email.trim().toLowerCase();
    const passwordHash = await this.secrets.hashPassword(
      input.password ?? this.secrets.randomToken(16),
    );
    return this.em.fork().transactional(async (em) => {
      await assertSitesExist(em, input.siteIds, 'body.siteIds');
      if (await em.findOne(User, { email })) {
        throw new ConflictException(`body.email: ${email} already belongs to someone.`);
      }
      const now = this.clock.now();
      const user = em.create(User, {
        id: input.id ?? this.ids.uuid(),
        email,
        name: input.name,
        role: input.role,
        needsCountersign: input.needsCountersign ?? false,
        passwordHash,
        mustChangePassword,
        active: true,
        createdAt: now,
        updatedAt: now,
      });
      em.persist(user);
      await em.flush();
      await replaceUserSites(em, user.id, input.siteIds);
      await this.audit.record(em, {
        kind: 'user.invited',
        actorId: admin?.userId ?? null,
        subjectType: 'user',
        subjectId: user.id,
        detail: {
          role: user.role,
          siteIds: input.siteIds,
          needsCountersign: user.needsCountersign,
        },
      });
      return this.view(user, [...new Set(input.siteIds)].sort());
    });
  }

  async update(
    admin: Pick<AuthUser, 'userId'> | null,
    userId: string,
    patch: z.infer<typeof updateUserSchema>,
  ): Promise<AdminUser> {
    return this.em.fork().transactional(async (em) => {
      const user = await this.find(em, userId);
      const before = {
        role: user.role,
        siteIds: await siteIdsOfUser(em, user.id),
        active: user.active,
      };
      const changes: Record<string, unknown> = {};
      if (patch.siteIds) await assertSitesExist(em, patch.siteIds, 'body.siteIds');
      if (patch.name !== undefined && patch.name !== user.name) {
        user.name = patch.name;
        changes.name = 'changed';
      }
      if (
        patch.needsCountersign !== undefined &&
        patch.needsCountersign !== user.needsCountersign
      ) {
        user.needsCountersign = patch.needsCountersign;
        changes.needsCountersign = patch.needsCountersign;
      }
      if (patch.role !== undefined && patch.role !== user.role) {
        user.role = patch.role;
        changes.role = { from: before.role, to: patch.role };
      }
      if (patch.active !== undefined && patch.active !== user.active) {
        user.active = patch.active;
        user.deactivatedAt = patch.active ? null : this.clock.now();
        changes.active = patch.active;
      }
      const siteIds = patch.siteIds ? [...new Set(patch.siteIds)].sort() : before.siteIds;
      if (patch.siteIds && siteIds.join() !== before.siteIds.join()) {
        await replaceUserSites(em, user.id, siteIds);
        changes.siteIds = { from: before.siteIds, to: siteIds };
      }
      if (Object.keys(changes).length === 0) return this.view(user, siteIds);

      user.updatedAt = this.clock.now();
      await em.flush();
      if (before.role === 'admin' && before.active && (user.role !== 'admin' || !user.active)) {
        const admins = await em.count(User, { role: 'admin', active: true });
        if (admins === 0) {
          throw new ConflictException(
            'At least one active admin must remain; make someone else admin first.',
          );
        }
      }
      if (changes.role || changes.siteIds || changes.active !== undefined) {
        // Claims carry role and sites: end the sessions so the next request signs in afresh.
        await this.tokens.revokeSessionsOfUser(em, user.id, 'account-changed');
      }
      const kinds: [string, boolean][] = [
        ['user.role_changed', changes.role !== undefined],
        ['user.sites_changed', changes.siteIds !== undefined],
        ['user.deactivated', changes.active === false],
        ['user.reactivated', changes.active === true],
        ['user.updated', changes.name !== undefined || changes.needsCountersign !== undefined],
      ];
      for (const [kind, happened] of kinds) {
        if (!happened) continue;
        await this.audit.record(em, {
          kind,
          actorId: admin?.userId ?? null,
          subjectType: 'user',
          subjectId: user.id,
          detail: changes,
        });
      }
      return this.view(user, siteIds);
    });
  }

  async me(caller: AuthUser): Promise<MeView> {
    const user = await this.find(this.em.fork(), caller.userId);
    return {
      id: user.id,
      name: user.name,
      email: user.email,
      role: user.role,
      siteIds: caller.siteIds,
      needsCountersign: user.needsCountersign,
      mustChangePassword: user.mustChangePassword,
      deviceId: caller.deviceId,
    };
  }

  /** The sites the person belongs to (every membership, not only this session's), by name. */
  async mySites(caller: AuthUser): Promise<MySiteView[]> {
    const em = this.em.fork();
    const siteIds = await siteIdsOfUser(em, caller.userId);
    if (siteIds.length === 0) return [];
    const sites = await em.find(
      Site,
      { id: { $in: siteIds } },
      { orderBy: { name: 'asc', id: 'asc' } },
    );
    return sites.map((site) => ({
      id: site.id,
      name: site.name,
      kind: site.kind,
      timeZone: site.timeZone,
      address: site.address,
    }));
  }

  /**
   * Everyone who belongs to one of the caller's sites (the caller included, former staff too:
   * a signature stays theirs), by name. Names and roles only: no e-mail address, no activity.
   */
  async colleagues(caller: AuthUser): Promise<ColleagueView[]> {
    const em = this.em.fork();
    const siteIds = await siteIdsOfUser(em, caller.userId);
    if (siteIds.length === 0) return [];
    const rows = await em.getConnection().execute<{ id: string; name: string; role: Role }[]>(
      `select distinct u."id", u."name", u."role"
         from "app_user" u join "user_site" s on s."user_id" = u."id"
        where s."site_id" in (${siteIds.map(() => '?').join(', ')})
        order by u."name", u."id"`,
      siteIds,
    );
    return rows.map((row) => ({ id: row.id, name: row.name, role: row.role }));
  }

  async changePassword(
    caller: AuthUser,
    input: z.infer<typeof changePasswordSchema>,
  ): Promise<void> {
    const em = this.em.fork();
    const user = await this.find(em, caller.userId);
    if (!(await this.secrets.verifyPassword(user.passwordHash, input.currentPassword))) {
      throw new UnauthorizedException('currentPassword: that is not your current password.');
    }
    if (input.newPassword === input.currentPassword) {
      throw new BadRequestException(
        'body.newPassword: choose a password different from the current one.',
      );
    }
    const passwordHash = await this.secrets.hashPassword(input.newPassword);
    await em.transactional(async (tem) => {
      user.passwordHash = passwordHash;
      user.mustChangePassword = false;
      user.updatedAt = this.clock.now();
      tem.persist(user);
      await tem.flush();
      await this.audit.record(tem, {
        kind: 'user.password_changed',
        actorId: user.id,
        deviceId: caller.deviceId,
        subjectType: 'user',
        subjectId: user.id,
      });
    });
  }

  private async find(em: EntityManager, userId: string): Promise<User> {
    const user = await em.findOne(User, { id: userId });
    if (!user) throw new NotFoundException(`No person has the id ${userId}.`);
    return user;
  }

  private view(user: User, siteIds: string[]): AdminUser {
    return {
      id: user.id,
      name: user.name,
      email: user.email,
      role: user.role,
      siteIds,
      needsCountersign: user.needsCountersign,
      active: user.active,
      mustChangePassword: user.mustChangePassword,
      createdAt: user.createdAt.toISOString(),
      lastSignInAt: user.lastSignInAt ? user.lastSignInAt.toISOString() : null,
    };
  }
}
