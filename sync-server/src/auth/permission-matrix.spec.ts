// Every identity route × every kind of caller, with the status each must get
// (docs/sync-protocol.md, Guarantees 6: no token, an expired token or a revoked tablet's token gets
// 401; a role not allowed on a route gets 403). The last test checks the table covers every such
// route in the OpenAPI document, so a new route cannot slip in without a row.
import { JwtService } from '@nestjs/jwt';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DevicesService } from '../devices/devices.service';
import {
  bearer,
  createDevice,
  createSite,
  createUser,
  revokeDevice,
  signIn,
  type TestUser,
} from '../testing/identity-factory';
import { createTestApp, type TestApp } from '../testing/test-app';
import type { AccessTokenClaims } from './auth-user';

type CallerName =
  'none' | 'expired' | 'revokedTablet' | 'orthoptist' | 'outreachTablet' | 'supervisor' | 'admin';
const CALLERS: CallerName[] = [
  'none',
  'expired',
  'revokedTablet',
  'orthoptist',
  'outreachTablet',
  'supervisor',
  'admin',
];
const ROLE_CALLERS = ['orthoptist', 'outreachTablet', 'supervisor', 'admin'] as const;
type RoleCaller = (typeof ROLE_CALLERS)[number];

interface Caller {
  token: string | null;
  person: TestUser | null;
  deviceSecret: string | null;
  deviceId: string | null;
}

interface Row {
  method: 'get' | 'post' | 'patch';
  /** As the OpenAPI document names it. */
  route: string;
  path: () => Promise<string> | string;
  body?: (caller: Caller) => Promise<object> | object;
  /** Status for each signed-in role; the three refused callers get 401 unless `public`. */
  expect: Record<RoleCaller, number>;
  public?: boolean;
  /** The route ends the caller's session: give it a session of its own. */
  freshSession?: boolean;
}

const only = (allowed: RoleCaller[], ok: number, refused = 403): Record<RoleCaller, number> =>
  Object.fromEntries(
    ROLE_CALLERS.map((role) => [role, allowed.includes(role) ? ok : refused]),
  ) as Record<RoleCaller, number>;
const everyone = (ok: number) => only([...ROLE_CALLERS], ok);

describe('permission matrix of the identity routes', () => {
  let t: TestApp;
  let siteId: string;
  let counter = 0;
  const callers = {} as Record<CallerName, Caller>;
  const server = () => t.app.getHttpServer();

  const newDeviceId = async () =>
    (
      await t.app
        .get(DevicesService)
        .register(null, { label: `Matrix tablet ${++counter}`, siteIds: [siteId] })
    ).deviceId;
  const newCode = async () =>
    (
      await t.app
        .get(DevicesService)
        .register(null, { label: `Matrix tablet ${++counter}`, siteIds: [siteId] })
    ).enrolmentCode;

  let targetUserId: string;
  let targetSiteId: string;
  let reissueDeviceId: string;
  let loginPerson: TestUser;

  const rows: Row[] = [
    {
      method: 'post',
      route: '/api/auth/login',
      public: true,
      path: () => '/api/auth/login',
      body: () => ({ email: loginPerson.email, password: loginPerson.password }),
      expect: everyone(200),
    },
    {
      method: 'post',
      route: '/api/auth/refresh',
      public: true,
      path: () => '/api/auth/refresh',
      body: async () => ({ refreshToken: (await signIn(t, { user: loginPerson })).refreshToken }),
      expect: everyone(200),
    },
    {
      method: 'post',
      route: '/api/devices/enrol',
      public: true,
      path: () => '/api/devices/enrol',
      body: async () => ({ code: await newCode() }),
      expect: everyone(200),
    },
    {
      method: 'post',
      route: '/api/auth/logout',
      path: () => '/api/auth/logout',
      expect: everyone(204),
      freshSession: true,
    },
    { method: 'get', route: '/api/me', path: () => '/api/me', expect: everyone(200) },
    { method: 'get', route: '/api/me/sites', path: () => '/api/me/sites', expect: everyone(200) },
    {
      method: 'get',
      route: '/api/me/colleagues',
      path: () => '/api/me/colleagues',
      expect: everyone(200),
    },
    {
      method: 'post',
      route: '/api/me/password',
      path: () => '/api/me/password',
      body: (caller) => {
        const person = caller.person ?? { password: 'no-one-signed-in' };
        const newPassword = `${person.password}-${++counter}`;
        const body = { currentPassword: person.password, newPassword };
        person.password = newPassword;
        return body;
      },
      expect: everyone(204),
    },
    {
      method: 'get',
      route: '/api/admin/users',
      path: () => '/api/admin/users',
      expect: only(['admin'], 200),
    },
    {
      method: 'post',
      route: '/api/admin/users',
      path: () => '/api/admin/users',
      body: () => ({
        name: 'Invitee',
        email: `invitee${++counter}@test.fuselight.test`,
        role: 'orthoptist',
        siteIds: [siteId],
      }),
      expect: only(['admin'], 201),
    },
    {
      method: 'patch',
      route: '/api/admin/users/{id}',
      path: () => `/api/admin/users/${targetUserId}`,
      body: () => ({ needsCountersign: counter++ % 2 === 0 }),
      expect: only(['admin'], 200),
    },
    {
      method: 'get',
      route: '/api/admin/sites',
      path: () => '/api/admin/sites',
      expect: only(['admin'], 200),
    },
    {
      method: 'post',
      route: '/api/admin/sites',
      path: () => '/api/admin/sites',
      body: () => ({ name: `Matrix site ${++counter}`, kind: 'outreach' }),
      expect: only(['admin'], 201),
    },
    {
      method: 'patch',
      route: '/api/admin/sites/{id}',
      path: () => `/api/admin/sites/${targetSiteId}`,
      body: () => ({ address: `${++counter} Harbour Row` }),
      expect: only(['admin'], 200),
    },
    {
      method: 'get',
      route: '/api/admin/settings',
      path: () => '/api/admin/settings',
      expect: only(['admin'], 200),
    },
    {
      method: 'patch',
      route: '/api/admin/settings',
      path: () => '/api/admin/settings',
      body: () => ({ unsyncedWarningHours: 24 }),
      expect: only(['admin'], 200),
    },
    {
      method: 'get',
      route: '/api/admin/devices',
      path: () => '/api/admin/devices',
      expect: only(['admin'], 200),
    },
    {
      method: 'post',
      route: '/api/admin/devices',
      path: () => '/api/admin/devices',
      body: () => ({ label: `Matrix tablet ${++counter}`, siteIds: [siteId] }),
      expect: only(['admin'], 201),
    },
    {
      method: 'patch',
      route: '/api/admin/devices/{id}/sites',
      path: () => `/api/admin/devices/${reissueDeviceId}/sites`,
      body: () => ({ siteIds: [siteId] }),
      expect: only(['admin'], 200),
    },
    {
      method: 'post',
      route: '/api/admin/devices/{id}/enrolment-code',
      path: () => `/api/admin/devices/${reissueDeviceId}/enrolment-code`,
      expect: only(['admin'], 201),
    },
    {
      method: 'post',
      route: '/api/admin/devices/{id}/revoke',
      path: async () => `/api/admin/devices/${await newDeviceId()}/revoke`,
      expect: only(['admin'], 200),
    },
    {
      method: 'post',
      route: '/api/admin/devices/{id}/retire',
      path: async () => `/api/admin/devices/${await newDeviceId()}/retire`,
      expect: only(['admin'], 200),
    },
    {
      method: 'post',
      route: '/api/devices/heartbeat',
      path: () => '/api/devices/heartbeat',
      body: () => ({ appVersion: '0.1.0', outboxSize: 3 }),
      expect: only(['outreachTablet'], 200),
    },
    {
      method: 'get',
      route: '/api/devices/me',
      path: () => '/api/devices/me',
      expect: only(['outreachTablet'], 200),
    },
    {
      method: 'get',
      route: '/api/devices/me/key-share',
      path: () => '/api/devices/me/key-share',
      expect: only(['outreachTablet'], 200),
    },
    {
      method: 'get',
      route: '/api/audit',
      path: () => '/api/audit?scope=account',
      expect: only(['admin'], 200),
    },
    {
      method: 'get',
      route: '/api/audit',
      path: () => '/api/audit?scope=clinical',
      expect: only(['supervisor'], 200),
    },
  ];

  beforeAll(async () => {
    t = await createTestApp();
    siteId = (await createSite(t)).id;
    targetSiteId = (await createSite(t)).id;
    targetUserId = (await createUser(t, { role: 'orthoptist', siteIds: [siteId] })).id;
    reissueDeviceId = await newDeviceId();
    loginPerson = await createUser(t, { role: 'orthoptist', siteIds: [siteId] });

    const tablet = await createDevice(t, { siteIds: [siteId] });
    const people = {
      orthoptist: await createUser(t, { role: 'orthoptist', siteIds: [siteId] }),
      outreachTablet: await createUser(t, { role: 'outreach', siteIds: [siteId] }),
      supervisor: await createUser(t, { role: 'supervisor', siteIds: [siteId] }),
      admin: await createUser(t, { role: 'admin', siteIds: [] }),
    };
    for (const role of ROLE_CALLERS) {
      const device = role === 'outreachTablet' ? tablet : null;
      const session = await signIn(t, { user: people[role], ...(device ? { device } : {}) });
      callers[role] = {
        token: session.accessToken,
        person: people[role],
        deviceSecret: device?.deviceSecret ?? null,
        deviceId: device?.deviceId ?? null,
      };
    }
    callers.none = { token: null, person: null, deviceSecret: null, deviceId: null };

    // A token of a live session, issued long enough ago to have expired.
    const jwt = t.app.get(JwtService);
    const live = jwt.decode<AccessTokenClaims>(callers.orthoptist.token as string);
    const issuedAt =
      Math.floor(t.clock.now().getTime() / 1000) - t.config.accessTokenTtlSeconds - 60;
    const expiredToken = await jwt.signAsync({
      sub: live.sub,
      role: live.role,
      siteIds: live.siteIds,
      deviceId: live.deviceId,
      sessionId: live.sessionId,
      iat: issuedAt,
    });
    callers.expired = { token: expiredToken, person: null, deviceSecret: null, deviceId: null };

    const doomed = await createDevice(t, { siteIds: [siteId] });
    const doomedPerson = await createUser(t, { role: 'outreach', siteIds: [siteId] });
    const doomedSession = await signIn(t, { user: doomedPerson, device: doomed });
    await revokeDevice(t, doomed.deviceId);
    callers.revokedTablet = {
      token: doomedSession.accessToken,
      person: doomedPerson,
      deviceSecret: null,
      deviceId: doomed.deviceId,
    };
  });
  afterAll(async () => {
    await t.close();
  });

  function expected(row: Row, caller: CallerName): number {
    if ((ROLE_CALLERS as readonly string[]).includes(caller))
      return row.expect[caller as RoleCaller];
    return row.public ? row.expect.orthoptist : 401;
  }

  for (const row of rows) {
    const label = row.route === '/api/audit' ? String(row.path()) : row.route;
    const allowed = ROLE_CALLERS.filter((role) => row.expect[role] < 400);
    const title = row.public
      ? `${row.method.toUpperCase()} ${label} is open to every caller, token or not`
      : `${row.method.toUpperCase()} ${label} lets ${allowed.join(', ')} through and refuses the rest`;
    it(title, async () => {
      const seen: Record<string, number> = {};
      const want: Record<string, number> = {};
      for (const name of CALLERS) {
        let caller = callers[name];
        if (row.freshSession && caller.person && name !== 'revokedTablet' && name !== 'expired') {
          const session = await signIn(t, {
            user: caller.person,
            ...(caller.deviceSecret && caller.deviceId
              ? { device: { deviceId: caller.deviceId, deviceSecret: caller.deviceSecret } }
              : {}),
          });
          caller = { ...caller, token: session.accessToken };
        }
        const path = await row.path();
        let call = request(server())[row.method](path);
        if (caller.token) call = call.set(bearer(caller.token));
        const body = row.body ? await row.body(caller) : undefined;
        const res = await (body ? call.send(body) : call);
        seen[name] = res.status;
        want[name] = expected(row, name);
        if (name === 'revokedTablet' && !row.public) expect(res.body.erase).toBe(true);
      }
      expect(seen).toEqual(want);
    });
  }

  it('has a row for every identity route in the OpenAPI document, each tagged and, unless public, bearer-protected', async () => {
    const doc = await request(server()).get('/api/docs-json');
    expect(doc.status).toBe(200);
    const mine = /^\/api\/(auth|me|admin|devices|audit)(\/|$)/;
    const documented: string[] = [];
    const problems: string[] = [];
    for (const [path, operations] of Object.entries(
      doc.body.paths as Record<string, Record<string, { tags?: string[]; security?: unknown[] }>>,
    )) {
      if (!mine.test(path)) continue;
      for (const [method, operation] of Object.entries(operations)) {
        const key = `${method} ${path}`;
        documented.push(key);
        if (!operation.tags?.length) problems.push(`${key} has no tag`);
        const isPublic = rows.some(
          (row) => row.public && row.route === path && row.method === method,
        );
        if (!isPublic && !operation.security?.length)
          problems.push(`${key} has no bearer security`);
      }
    }
    expect(problems).toEqual([]);
    const covered = new Set(rows.map((row) => `${row.method} ${row.route}`));
    expect(documented.filter((key) => !covered.has(key))).toEqual([]);
    expect([...covered].filter((key) => !documented.includes(key))).toEqual([]);
  });
});
