// Test helpers for the sync and conflicts tiers: the real app on a fresh database, signed-in
// callers, tablets with their own HLC, and valid patient changes.
//
// Tokens: until the identity factory (testing/identity-factory.ts) is committed, callers are
// minted here with the app's JwtService, and the app's session check is told to accept them
// (the only place that happens). Switch `signInAs` to the factory once it lands.
import { JwtService } from '@nestjs/jwt';
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
import type { AccessTokenClaims } from '../../auth/auth-user';
import { SESSION_CHECK, type SessionCheck } from '../../auth/session-check';
import { createTestApp, type TestApp } from '../../testing/test-app';

export const SITE_A = '0190c6a0-0000-7000-8000-00000000000a';
export const SITE_B = '0190c6a0-0000-7000-8000-00000000000b';

export interface Caller {
  userId: string;
  deviceId: string | null;
  role: Role;
  siteIds: string[];
  token: string;
}

export async function createSyncTestApp(
  options: { env?: Record<string, string> } = {},
): Promise<TestApp> {
  const t = await createTestApp(options);
  const check = t.app.get<symbol, SessionCheck>(SESSION_CHECK, { strict: false });
  check.assertActive = async () => undefined;
  return t;
}

export async function signInAs(
  t: TestApp,
  role: Role,
  siteIds: string[],
  options: { desk?: boolean; userId?: string } = {},
): Promise<Caller> {
  const userId = options.userId ?? uuidv7();
  const deviceId = options.desk ? null : uuidv7();
  // Issued at the app's (test) clock, which the guard judges expiry by.
  const claims: AccessTokenClaims & { iat: number } = {
    sub: userId,
    role,
    siteIds,
    deviceId,
    sessionId: uuidv7(),
    iat: Math.floor(t.clock.now().getTime() / 1000),
  };
  const token = await t.app.get(JwtService).signAsync(claims);
  return { userId, deviceId, role, siteIds, token };
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
