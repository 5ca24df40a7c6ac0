// Test helpers for the sync and conflicts tiers: the real app on a fresh database with two sites,
// signed-in callers, tablets with their own HLC, and valid patient changes.
//
// Callers are real people and real enrolled tablets (testing/identity-factory.ts), signed in
// through POST /api/auth/login, so every request passes the real guard and session check.
// Access tokens expire by the app's TestClock: a test that moves it past the access-token TTL
// signs the caller in again (`signInAgain`).
import request from 'supertest';
import { v7 as uuidv7 } from 'uuid';
import {
  PROTOCOL_VERSION,
  SCHEMA_VERSION,
  createClock,
  tick,
  type HlcClock,
  type JsonValue,
  type PullResponse,
  type PushResponse,
  type Role,
} from '@fuselight/shared';
import {
  createDevice,
  createSite,
  createUser,
  signIn,
  type TestDevice,
  type TestUser,
} from '../../testing/identity-factory';
import { createTestApp, type TestApp } from '../../testing/test-app';

export const SITE_A = '0190c6a0-0000-7000-8000-00000000000a';
export const SITE_B = '0190c6a0-0000-7000-8000-00000000000b';

export interface Caller {
  userId: string;
  deviceId: string | null;
  role: Role;
  /** The sites of the session (the person's sites that the tablet serves). */
  siteIds: string[];
  token: string;
  person: TestUser;
  device: TestDevice | null;
}

/** The real app on a fresh database holding the sites SITE_A and SITE_B. */
export async function createSyncTestApp(
  options: Parameters<typeof createTestApp>[0] = {},
): Promise<TestApp> {
  const t = await createTestApp(options);
  await createSite(t, { id: SITE_A, name: 'Site A' });
  await createSite(t, { id: SITE_B, name: 'Site B', kind: 'outreach' });
  return t;
}

/** A new person of `role` at `siteIds`, signed in on a new tablet for those sites (or at a desk). */
export async function signInAs(
  t: TestApp,
  role: Role,
  siteIds: string[],
  options: { desk?: boolean } = {},
): Promise<Caller> {
  const person = await createUser(t, { role, siteIds });
  const device = options.desk ? null : await createDevice(t, { siteIds });
  return signInWith(t, person, device);
}

/** The same person on the same tablet (or desk), signed in again at the app's current time. */
export function signInAgain(t: TestApp, caller: Caller): Promise<Caller> {
  return signInWith(t, caller.person, caller.device);
}

async function signInWith(
  t: TestApp,
  person: TestUser,
  device: TestDevice | null,
): Promise<Caller> {
  const session = await signIn(t, { user: person, ...(device ? { device } : {}) });
  return {
    userId: session.user.id,
    deviceId: session.deviceId,
    role: session.user.role,
    siteIds: session.user.siteIds,
    token: session.accessToken,
    person,
    device,
  };
}

/** A tablet: a caller with its own hybrid logical clock, ticking on the test clock. */
export class Tablet {
  private clock: HlcClock;

  constructor(
    private readonly t: TestApp,
    readonly caller: Caller,
  ) {
    this.clock = createClock(caller.deviceId ?? 'desk');
  }

  stamp(offsetMs = 0): string {
    const next = tick(this.clock, this.t.clock.now().getTime() + offsetMs);
    this.clock = next.clock;
    return next.stamp;
  }

  change(input: {
    recordId: string;
    fields: Record<string, JsonValue>;
    baseVersion?: number;
    collection?: string;
    deleted?: boolean;
    changeId?: string;
    hlc?: string;
  }): Record<string, unknown> {
    return {
      changeId: input.changeId ?? uuidv7(),
      collection: input.collection ?? 'patient',
      recordId: input.recordId,
      baseVersion: input.baseVersion ?? 0,
      hlc: input.hlc ?? this.stamp(),
      fields: input.fields,
      ...(input.deleted === undefined ? {} : { deleted: input.deleted }),
    };
  }

  push(changes: unknown[], envelope: Record<string, unknown> = {}): request.Test {
    return request(this.t.app.getHttpServer())
      .post('/api/sync/push')
      .set('authorization', `Bearer ${this.caller.token}`)
      .send({ protocol: PROTOCOL_VERSION, schemaVersion: SCHEMA_VERSION, changes, ...envelope });
  }

  async pushOk(changes: unknown[]): Promise<PushResponse> {
    const res = await this.push(changes);
    if (res.status !== 200)
      throw new Error(`push answered ${res.status}: ${JSON.stringify(res.body)}`);
    return res.body as PushResponse;
  }

  pull(after = 0, limit?: number): request.Test {
    return request(this.t.app.getHttpServer())
      .get('/api/sync/pull')
      .query({ after, ...(limit === undefined ? {} : { limit }) })
      .set('authorization', `Bearer ${this.caller.token}`);
  }

  async pullOk(after = 0, limit?: number): Promise<PullResponse> {
    const res = await this.pull(after, limit);
    if (res.status !== 200)
      throw new Error(`pull answered ${res.status}: ${JSON.stringify(res.body)}`);
    return res.body as PullResponse;
  }
}

export async function tabletFor(t: TestApp, role: Role, siteIds: string[]): Promise<Tablet> {
  return new Tablet(t, await signInAs(t, role, siteIds));
}

/** The fields of a valid new patient at a site. */
export function patientFields(
  siteId: string,
  overrides: Record<string, JsonValue> = {},
): Record<string, JsonValue> {
  return {
    siteId,
    givenName: 'Amara',
    familyName: 'Okafor',
    dateOfBirth: '2016-04-09',
    clinicNumber: 'FL-0001',
    ...overrides,
  };
}

export function newId(): string {
  return uuidv7();
}
