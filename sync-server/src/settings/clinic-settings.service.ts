// The clinic's settings: what is stored over the defaults (a stored value that no longer passes
// the schema is ignored in favour of the default, never passed to tablets), and changes by an
// admin, audited with the values before and after.
import { EntityManager } from '@mikro-orm/postgresql';
import { Inject, Injectable } from '@nestjs/common';
import {
  DEFAULT_CLINIC_SETTINGS,
  clinicSettingsSchema,
  type ClinicSettings,
  type ClinicSettingsChange,
} from '@fuselight/shared';
import { AuditService } from '../audit/audit.service';
import type { AuthUser } from '../auth/auth-user';
import { CLOCK, type Clock } from '../common/clock.provider';
import { readStoredSettings, writeSetting } from './clinic-settings.store';

const SETTING_NAMES = Object.keys(clinicSettingsSchema.shape) as Array<keyof ClinicSettings>;

@Injectable()
export class ClinicSettingsService {
  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(CLOCK) private readonly clock: Clock,
    @Inject(AuditService) private readonly audit: AuditService,
  ) {}

  async read(em: EntityManager = this.em.fork()): Promise<ClinicSettings> {
    const settings: ClinicSettings = { ...DEFAULT_CLINIC_SETTINGS };
    for (const row of await readStoredSettings(em)) {
      const name = row.key as keyof ClinicSettings;
      if (!SETTING_NAMES.includes(name)) continue;
      const checked = clinicSettingsSchema.shape[name].safeParse(row.value);
      if (checked.success) (settings as Record<string, unknown>)[name] = checked.data;
    }
    return settings;
  }

  async update(
    admin: Pick<AuthUser, 'userId'> | null,
    change: ClinicSettingsChange,
  ): Promise<ClinicSettings> {
    return this.em.fork().transactional(async (em) => {
      const before = await this.read(em);
      const changed: Partial<Record<keyof ClinicSettings, { from: unknown; to: unknown }>> = {};
      for (const name of SETTING_NAMES) {
        const value = change[name];
        if (value === undefined || JSON.stringify(value) === JSON.stringify(before[name])) continue;
        await writeSetting(em, {
          key: name,
          value,
          updatedBy: admin?.userId ?? null,
          updatedAt: this.clock.now(),
        });
        changed[name] = { from: before[name], to: value };
      }
      if (Object.keys(changed).length > 0) {
        await this.audit.record(em, {
          kind: 'clinic.settings_changed',
          actorId: admin?.userId ?? null,
          subjectType: 'clinic_setting',
          detail: changed,
          scope: 'account',
        });
      }
      return this.read(em);
    });
  }
}
