// The Fleet: an admin registers a tablet for some sites and gets a single-use enrolment code
// (24 h, stored as SHA-256 only); the tablet trades the code for its device secret; sign-ins
// that carry the secret are bound to the tablet. Revoking refuses the tablet's every session at
// once and tells it to erase; retiring lets it push its outbox, then it erases itself.
import { EntityManager } from '@mikro-orm/postgresql';
import {
  BadRequestException,
  ConflictException,
  ForbiddenException,
  Inject,
  Injectable,
  NotFoundException,
} from '@nestjs/common';
import type { DeviceState, FleetDevice, UnlockWithoutHardware } from '@fuselight/shared';
import type { z } from 'zod';
import { AuditService } from '../audit/audit.service';
import { ATTEMPT_LIMITS, AttemptLimiter } from '../auth/attempt-limiter.service';
import type { AuthUser } from '../auth/auth-user';
import { SECRETS, type Secrets } from '../auth/secrets.provider';
import { TokenService } from '../auth/token.service';
import { CLOCK, IDS, type Clock, type IdGenerator } from '../common/clock.provider';
import { APP_CONFIG, type AppConfig } from '../config/app-config';
import {
  assertSitesExist,
  replaceDeviceSites,
  siteIdsDeviceMayHold,
  siteIdsOfDevice,
  siteIdsOfDevices,
} from '../users/memberships';
import { ClinicSettingsService } from '../settings/clinic-settings.service';
import { Device } from './device.entity';
import type {
  changeDeviceSitesSchema,
  heartbeatSchema,
  registerDeviceSchema,
} from './devices.schemas';

export const ENROLMENT_CODE_TTL_MS = 24 * 60 * 60 * 1000;

export interface EnrolmentTicket {
  deviceId: string;
  /** Shown once; typed on the tablet, grouped like ABCD-EFGH-JKMN. */
  enrolmentCode: string;
  expiresAt: string;
  /** Text for the QR code the admin's screen shows: the app's enrol address with the code. */
  qrPayload: string;
}

export interface DeviceSelfView {
  deviceId: string;
  label: string;
  state: DeviceState;
  siteIds: string[];
  /**
   * The sites whose records the tablet may hold now: its own sites that an active clinical
   * person who signed in on it still belongs to. A tablet deletes the records of any other site
   * it holds, keeping unsent Outbox entries (docs/sync-protocol.md). Absent from older servers.
   */
  holdSiteIds: string[];
  /** The clinic setting every tablet follows: hours unsynced edits may wait before it warns. */
  unsyncedWarningHours: number;
  /** The clinic setting: what a secret must be on a tablet without a platform authenticator. */
  unlockWithoutHardware: UnlockWithoutHardware;
}

const iso = (date: Date | null): string | null => (date ? date.toISOString() : null);

/** Upper case, no spaces or dashes: what people type is forgiven its grouping. */
export function normaliseEnrolmentCode(code: string): string {
  return code.toUpperCase().replace(/[\s-]/g, '');
}

@Injectable()
export class DevicesService {
  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(CLOCK) private readonly clock: Clock,
    @Inject(IDS) private readonly ids: IdGenerator,
    @Inject(SECRETS) private readonly secrets: Secrets,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
    @Inject(AuditService) private readonly audit: AuditService,
    @Inject(TokenService) private readonly tokens: TokenService,
    @Inject(AttemptLimiter) private readonly limiter: AttemptLimiter,
    @Inject(ClinicSettingsService) private readonly settings: ClinicSettingsService,
  ) {}

  async register(
    admin: Pick<AuthUser, 'userId'> | null,
    input: z.infer<typeof registerDeviceSchema>,
    id?: string,
  ): Promise<EnrolmentTicket> {
    return this.em.fork().transactional(async (em) => {
      await assertSitesExist(em, input.siteIds, 'body.siteIds');
      const device = em.create(Device, {
        id: id ?? this.ids.uuid(),
        label: input.label,
        state: 'pending',
        createdBy: admin?.userId ?? null,
        createdAt: this.clock.now(),
      });
      em.persist(device);
      await em.flush();
      await replaceDeviceSites(em, device.id, input.siteIds);
      const ticket = await this.newCode(em, device);
      await this.audit.record(em, {
        kind: 'device.registered',
        actorId: admin?.userId ?? null,
        deviceId: device.id,
        subjectType: 'device',
        subjectId: device.id,
        detail: { label: device.label, siteIds: input.siteIds },
      });
      return ticket;
    });
  }

  /** A new code for a pending or active tablet (to re-enrol one whose storage was wiped). */
  async reissueCode(
    admin: Pick<AuthUser, 'userId'> | null,
    deviceId: string,
  ): Promise<EnrolmentTicket> {
    return this.em.fork().transactional(async (em) => {
      const device = await this.find(em, deviceId);
      if (device.state === 'revoked' || device.state === 'retired') {
        throw new ConflictException(`This tablet is ${device.state}; register a new one instead.`);
      }
      const ticket = await this.newCode(em, device);
      await this.audit.record(em, {
        kind: 'device.code_issued',
        actorId: admin?.userId ?? null,
        deviceId: device.id,
        subjectType: 'device',
        subjectId: device.id,
      });
      return ticket;
    });
  }

  async list(): Promise<FleetDevice[]> {
    const em = this.em.fork();
    const devices = await em.find(Device, {}, { orderBy: { createdAt: 'desc', id: 'desc' } });
    const sites = await siteIdsOfDevices(
      em,
      devices.map((device) => device.id),
    );
    return devices.map((device) => this.view(device, sites.get(device.id) ?? []));
  }

  /**
   * Replaces the sites a tablet serves. A site taken off is removed from the tablet at its next
   * contact (GET /api/devices/me and the heartbeat answer `holdSiteIds`), its unsent edits kept;
   * sessions already open keep their token's sites until it is renewed (at most the access
   * token's lifetime), and the tablet does not store that site's records meanwhile.
   */
  async changeSites(
    admin: Pick<AuthUser, 'userId'> | null,
    deviceId: string,
    input: z.infer<typeof changeDeviceSitesSchema>,
  ): Promise<FleetDevice> {
    return this.em.fork().transactional(async (em) => {
      const device = await this.find(em, deviceId);
      if (device.state === 'revoked' || device.state === 'retired') {
        throw new ConflictException(`This tablet is ${device.state}; its sites cannot change.`);
      }
      await assertSitesExist(em, input.siteIds, 'body.siteIds');
      const before = await siteIdsOfDevice(em, device.id);
      await replaceDeviceSites(em, device.id, input.siteIds);
      const after = await siteIdsOfDevice(em, device.id);
      await this.audit.record(em, {
        kind: 'device.sites_changed',
        actorId: admin?.userId ?? null,
        deviceId: device.id,
        subjectType: 'device',
        subjectId: device.id,
        detail: { before, after },
      });
      return this.view(device, after);
    });
  }

  async revoke(admin: Pick<AuthUser, 'userId'> | null, deviceId: string): Promise<FleetDevice> {
    return this.em.fork().transactional(async (em) => {
      const device = await this.find(em, deviceId);
      if (device.state === 'revoked')
        throw new ConflictException('This tablet is already revoked.');
      const previous = device.state;
      device.state = 'revoked';
      device.revokedAt = this.clock.now();
      device.enrolmentCodeHash = null;
      device.enrolmentExpiresAt = null;
      await em.flush();
      await this.tokens.revokeSessionsOfDevice(em, device.id, 'device-revoked');
      await this.audit.record(em, {
        kind: 'device.revoked',
        actorId: admin?.userId ?? null,
        deviceId: device.id,
        subjectType: 'device',
        subjectId: device.id,
        detail: { previousState: previous },
      });
      return this.view(device, await siteIdsOfDevice(em, device.id));
    });
  }

  async retire(admin: Pick<AuthUser, 'userId'> | null, deviceId: string): Promise<FleetDevice> {
    return this.em.fork().transactional(async (em) => {
      const device = await this.find(em, deviceId);
      if (device.state === 'revoked' || device.state === 'retired') {
        throw new ConflictException(`This tablet is already ${device.state}.`);
      }
      const previous = device.state;
      device.state = 'retired';
      device.retiredAt = this.clock.now();
      device.enrolmentCodeHash = null;
      device.enrolmentExpiresAt = null;
      await em.flush();
      await this.audit.record(em, {
        kind: 'device.retired',
        actorId: admin?.userId ?? null,
        deviceId: device.id,
        subjectType: 'device',
        subjectId: device.id,
        detail: { previousState: previous },
      });
      return this.view(device, await siteIdsOfDevice(em, device.id));
    });
  }

  /** Trades a single-use code for the tablet's secret. Failed attempts are limited per address. */
  async enrol(
    rawCode: string,
    clientAddress: string,
  ): Promise<{ deviceId: string; deviceSecret: string }> {
    const addressKey = `enrol:address:${clientAddress}`;
    await this.limiter.assertAllowed(
      addressKey,
      ATTEMPT_LIMITS.enrolPerAddress,
      'enrolments from this address',
    );
    const codeHash = this.secrets.sha256(normaliseEnrolmentCode(rawCode));
    const now = this.clock.now();
    const outcome = await this.em.fork().transactional(async (em) => {
      // Taking the code and clearing it in one statement makes it single-use under concurrency.
      const taken = await em.execute<
        { id: string; enrolment_expires_at: Date; state: DeviceState }[]
      >(
        `update "device" d set "enrolment_code_hash" = null, "enrolment_expires_at" = null
           from (select "id", "enrolment_expires_at", "state" from "device"
                  where "enrolment_code_hash" = ? for update) old
          where d."id" = old."id"
          returning d."id", old."enrolment_expires_at", old."state"`,
        [codeHash],
      );
      const row = taken[0];
      if (!row)
        return {
          error:
            'code: not a valid enrolment code, or it was already used; ask an admin for a new one.',
        };
      if (new Date(row.enrolment_expires_at).getTime() <= now.getTime()) {
        return { error: 'code: this enrolment code has expired; ask an admin for a new one.' };
      }
      const device = await em.findOneOrFail(Device, { id: row.id });
      const secret = this.secrets.randomToken(32);
      const reEnrolled = device.state === 'active';
      device.secretHash = this.secrets.sha256(secret);
      device.state = 'active';
      device.enrolledAt = now;
      device.lastSeenAt = now;
      await em.flush();
      if (reEnrolled) await this.tokens.revokeSessionsOfDevice(em, device.id, 'device-reenrolled');
      await this.audit.record(em, {
        kind: 'device.enrolled',
        deviceId: device.id,
        subjectType: 'device',
        subjectId: device.id,
        detail: { clientAddress, reEnrolled },
      });
      return { deviceId: device.id, deviceSecret: secret };
    });
    if ('error' in outcome) {
      // Counted outside the transaction so an expired code's clearing and the count both stick.
      await this.limiter.recordFailure(addressKey, ATTEMPT_LIMITS.enrolPerAddress);
      throw new BadRequestException(outcome.error);
    }
    return outcome;
  }

  async heartbeat(
    caller: AuthUser,
    report: z.infer<typeof heartbeatSchema>,
  ): Promise<DeviceSelfView> {
    return this.em.fork().transactional(async (em) => {
      const device = await this.find(em, caller.deviceId ?? '');
      device.lastSeenAt = this.clock.now();
      device.appVersion = report.appVersion;
      device.outboxSize = report.outboxSize;
      if (report.keyProtection !== undefined) device.keyProtection = report.keyProtection;
      await em.flush();
      return this.selfView(em, device, caller);
    });
  }

  /**
   * The calling tablet's key share (docs/threat-model.md): its data key is also wrapped under
   * it, so an online sign-in opens a locked tablet (a person new to it, or too many wrong PINs)
   * and nothing is lost. Not given to a revoked tablet.
   */
  async keyShare(caller: AuthUser): Promise<{ share: string }> {
    const device = await this.find(this.em.fork(), caller.deviceId ?? '');
    if (device.state === 'revoked') {
      throw new ForbiddenException('This tablet was revoked; its key share is not given out.');
    }
    return { share: this.secrets.tabletKeyShare(this.config.jwtSecret, device.id) };
  }

  async self(caller: AuthUser): Promise<DeviceSelfView> {
    const em = this.em.fork();
    const device = await this.find(em, caller.deviceId ?? '');
    return this.selfView(em, device, caller);
  }

  private async selfView(
    em: EntityManager,
    device: Device,
    caller: AuthUser,
  ): Promise<DeviceSelfView> {
    const settings = await this.settings.read();
    return {
      deviceId: device.id,
      label: device.label,
      state: device.state,
      siteIds: caller.siteIds,
      holdSiteIds: await siteIdsDeviceMayHold(em, device.id),
      unsyncedWarningHours: settings.unsyncedWarningHours,
      unlockWithoutHardware: settings.unlockWithoutHardware,
    };
  }

  private async find(em: EntityManager, deviceId: string): Promise<Device> {
    const device = deviceId ? await em.findOne(Device, { id: deviceId }) : null;
    if (!device) throw new NotFoundException(`No tablet has the id ${deviceId}.`);
    return device;
  }

  private async newCode(em: EntityManager, device: Device): Promise<EnrolmentTicket> {
    const raw = this.secrets.randomCode(12);
    const expiresAt = new Date(this.clock.now().getTime() + ENROLMENT_CODE_TTL_MS);
    device.enrolmentCodeHash = this.secrets.sha256(raw);
    device.enrolmentExpiresAt = expiresAt;
    await em.flush();
    const enrolmentCode = raw.match(/.{1,4}/g)?.join('-') ?? raw;
    return {
      deviceId: device.id,
      enrolmentCode,
      expiresAt: expiresAt.toISOString(),
      // The code travels in the fragment, which browsers never send to a server or its logs.
      qrPayload: `${this.config.appOrigin}/enrol#code=${enrolmentCode}`,
    };
  }

  private view(device: Device, siteIds: string[]): FleetDevice {
    return {
      id: device.id,
      label: device.label,
      state: device.state,
      siteIds,
      createdAt: device.createdAt.toISOString(),
      enrolledAt: iso(device.enrolledAt),
      enrolmentExpiresAt: device.enrolmentCodeHash ? iso(device.enrolmentExpiresAt) : null,
      lastSeenAt: iso(device.lastSeenAt),
      appVersion: device.appVersion,
      outboxSize: device.outboxSize,
      keyProtection: device.keyProtection,
      retiredAt: iso(device.retiredAt),
      revokedAt: iso(device.revokedAt),
    };
  }
}
