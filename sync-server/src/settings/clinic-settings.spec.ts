// The clinic's settings: defaults until an admin changes them, changes checked and audited, and
// every tablet told the setting it follows with GET /api/devices/me.
import { clinicSettingsSchema } from '@fuselight/shared';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { z } from 'zod';
import {
  bearer,
  createDevice,
  createSite,
  createUser,
  signIn,
  type TestSession,
} from '../testing/identity-factory';
import { createTestApp, type TestApp } from '../testing/test-app';

const exactSettings = z.strictObject(clinicSettingsSchema.shape);

describe('the clinic’s settings', () => {
  let t: TestApp;
  let admin: TestSession;
  let tablet: TestSession;
  const server = () => t.app.getHttpServer();

  beforeAll(async () => {
    t = await createTestApp();
    const site = await createSite(t);
    admin = await signIn(t, { user: await createUser(t, { role: 'admin', siteIds: [] }) });
    const device = await createDevice(t, { siteIds: [site.id] });
    const orthoptist = await createUser(t, { role: 'orthoptist', siteIds: [site.id] });
    tablet = await signIn(t, { user: orthoptist, device });
  });
  afterAll(async () => {
    await t.close();
  });

  it('answers 24 hours for unsynced edits until an admin changes it, and tells tablets', async () => {
    const read = await request(server()).get('/api/admin/settings').set(bearer(admin.accessToken));
    expect(read.status).toBe(200);
    expect(exactSettings.parse(read.body)).toEqual({
      unsyncedWarningHours: 24,
      unlockWithoutHardware: { rule: 'pin-only' },
    });
    const me = await request(server()).get('/api/devices/me').set(bearer(tablet.accessToken));
    expect(me.body.unsyncedWarningHours).toBe(24);
    expect(me.body.unlockWithoutHardware).toEqual({ rule: 'pin-only' });
  });

  it('refuses a value out of range or an unknown setting, naming the field', async () => {
    const zero = await request(server())
      .patch('/api/admin/settings')
      .set(bearer(admin.accessToken))
      .send({ unsyncedWarningHours: 0 });
    expect(zero.status).toBe(400);
    expect(zero.body.message).toContain('unsyncedWarningHours');
    expect(zero.body.message).toContain('at least 1 hour');
    const unknown = await request(server())
      .patch('/api/admin/settings')
      .set(bearer(admin.accessToken))
      .send({ unsyncedWarningDays: 2 });
    expect(unknown.status).toBe(400);
    expect(unknown.body.message).toContain('unsyncedWarningDays');
  });

  it('keeps an admin’s change, audits it and passes it to tablets with the device state', async () => {
    const changed = await request(server())
      .patch('/api/admin/settings')
      .set(bearer(admin.accessToken))
      .send({ unsyncedWarningHours: 8 });
    expect(changed.status).toBe(200);
    expect(changed.body).toEqual({
      unsyncedWarningHours: 8,
      unlockWithoutHardware: { rule: 'pin-only' },
    });
    const me = await request(server()).get('/api/devices/me').set(bearer(tablet.accessToken));
    expect(me.body).toMatchObject({ state: 'active', unsyncedWarningHours: 8 });
    const events = await t
      .em()
      .getConnection()
      .execute<Array<{ detail: unknown; actor_id: string }>>(
        `select "detail", "actor_id" from "audit_event" where "kind" = 'clinic.settings_changed'`,
      );
    expect(events).toHaveLength(1);
    expect(events[0]!.detail).toEqual({ unsyncedWarningHours: { from: 24, to: 8 } });
    expect(events[0]!.actor_id).toBe(admin.user.id);
  });

  it('refuses a passphrase policy that is too short, names an unknown kind of character or has no rule, naming the field', async () => {
    const patch = (body: object) =>
      request(server()).patch('/api/admin/settings').set(bearer(admin.accessToken)).send(body);
    const short = await patch({
      unlockWithoutHardware: { rule: 'passphrase', minLength: 8, requiredClasses: [] },
    });
    expect(short.status).toBe(400);
    expect(short.body.message).toContain('unlockWithoutHardware.minLength');
    expect(short.body.message).toContain('at least 12 characters');

    const unknownClass = await patch({
      unlockWithoutHardware: { rule: 'passphrase', minLength: 14, requiredClasses: ['emoji'] },
    });
    expect(unknownClass.status).toBe(400);
    expect(unknownClass.body.message).toContain('unlockWithoutHardware.requiredClasses.0');
    expect(unknownClass.body.message).toContain('lowercase, uppercase, digit, symbol');

    const twice = await patch({
      unlockWithoutHardware: {
        rule: 'passphrase',
        minLength: 14,
        requiredClasses: ['digit', 'digit'],
      },
    });
    expect(twice.status).toBe(400);
    expect(twice.body.message).toContain('unlockWithoutHardware.requiredClasses');
    expect(twice.body.message).toContain('twice');

    const noRule = await patch({ unlockWithoutHardware: { minLength: 14 } });
    expect(noRule.status).toBe(400);
    expect(noRule.body.message).toContain('unlockWithoutHardware');
    expect(noRule.body.message).toContain("rule 'pin-only' or 'passphrase'");

    const read = await request(server()).get('/api/admin/settings').set(bearer(admin.accessToken));
    expect(read.body.unlockWithoutHardware).toEqual({ rule: 'pin-only' });
  });

  it('keeps a passphrase policy, audits it and tells tablets; changing it back to PIN only is kept too', async () => {
    const policy = {
      rule: 'passphrase',
      minLength: 14,
      requiredClasses: ['uppercase', 'digit'],
    };
    const changed = await request(server())
      .patch('/api/admin/settings')
      .set(bearer(admin.accessToken))
      .send({ unlockWithoutHardware: policy });
    expect(changed.status).toBe(200);
    expect(changed.body.unlockWithoutHardware).toEqual(policy);
    const me = await request(server()).get('/api/devices/me').set(bearer(tablet.accessToken));
    expect(me.body.unlockWithoutHardware).toEqual(policy);

    // The same policy again is no change: nothing more is audited.
    await request(server())
      .patch('/api/admin/settings')
      .set(bearer(admin.accessToken))
      .send({ unlockWithoutHardware: { ...policy } });
    const events = await t
      .em()
      .getConnection()
      .execute<Array<{ detail: Record<string, unknown> }>>(
        `select "detail" from "audit_event" where "kind" = 'clinic.settings_changed' and "detail" -> 'unlockWithoutHardware' is not null`,
      );
    expect(events).toHaveLength(1);
    expect(events[0]!.detail.unlockWithoutHardware).toEqual({
      from: { rule: 'pin-only' },
      to: policy,
    });

    const back = await request(server())
      .patch('/api/admin/settings')
      .set(bearer(admin.accessToken))
      .send({ unlockWithoutHardware: { rule: 'pin-only' } });
    expect(back.body.unlockWithoutHardware).toEqual({ rule: 'pin-only' });
  });
});
