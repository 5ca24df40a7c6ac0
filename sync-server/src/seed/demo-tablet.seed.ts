import type { EntityManager } from '@mikro-orm/postgresql';
import { Inject } from '@nestjs/common';
import { ModuleRef } from '@nestjs/core';
import { Device } from '../devices/device.entity';
import { DevicesService, type EnrolmentTicket } from '../devices/devices.service';
import { DEMO_TABLET } from './demo-scenario';
import type { SeedStep } from './seed-step';

/**
 * Registers the demo tablet for both sites once, and issues a fresh enrolment code at every
 * start (enrolling again replaces an earlier enrolment of the demo tablet).
 */
export class DemoTabletSeed implements SeedStep {
  readonly name = 'demo tablet';

  constructor(@Inject(ModuleRef) private readonly moduleRef: ModuleRef) {}

  async run(em: EntityManager): Promise<string[]> {
    const devices = this.moduleRef.get(DevicesService, { strict: false });
    const existing = await em.findOne(Device, { id: DEMO_TABLET.id });
    if (existing && (existing.state === 'revoked' || existing.state === 'retired')) {
      return [
        `Demo tablet is ${existing.state}; register a new tablet in the Fleet to try enrolment.`,
      ];
    }
    const ticket: EnrolmentTicket = existing
      ? await devices.reissueCode(null, DEMO_TABLET.id)
      : await devices.register(
          null,
          { label: DEMO_TABLET.label, siteIds: DEMO_TABLET.siteIds },
          DEMO_TABLET.id,
        );
    return [
      `Demo tablet enrolment code: ${ticket.enrolmentCode} (single use, valid until ${ticket.expiresAt})`,
      `  or open on the tablet: ${ticket.qrPayload}`,
    ];
  }
}
