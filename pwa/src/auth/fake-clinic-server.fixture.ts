// A stand-in for the clinic server's identity routes, for unit tests: issues JWT-shaped access
// tokens that expire on the test's clock, rotating refresh tokens, tablet enrolment, and can be
// told to refuse refreshes or to answer as for a revoked or retired tablet.
import type { SessionUser } from '@fuselight/shared';
import type { FetchLike } from './identity-api';

export const SITE_A = '0190c6a0-0000-7000-8000-00000000a001';
export const SITE_B = '0190c6a0-0000-7000-8000-00000000a002';

/** What GET /api/me/sites knows about the sites (names invented for the tests). */
export const SITES = [
  { id: SITE_A, name: 'Harbourview Eye Clinic', kind: 'clinic', timeZone: 'Europe/London' },
  { id: SITE_B, name: 'Saltmarsh School (outreach)', kind: 'outreach', timeZone: 'Europe/London' },
];

export const AMARA: SessionUser = {
  id: '0190c6a0-0000-7000-8000-000000000011',
  name: 'Amara Lindqvist',
  email: 'amara@harbourview.test',
  role: 'orthoptist',
  siteIds: [SITE_A, SITE_B],
};
export const TOMASZ: SessionUser = {
  id: '0190c6a0-0000-7000-8000-000000000012',
  name: 'Tomasz Okonjo',
  email: 'tomasz@harbourview.test',
  role: 'supervisor',
  siteIds: [SITE_A],
};

export const ROSALIND: SessionUser = {
  id: '0190c6a0-0000-7000-8000-000000000013',
  name: 'Rosalind Achterberg',
  email: 'rosalind@harbourview.test',
  role: 'admin',
  siteIds: [SITE_A],
};

const PASSWORD = 'correct horse battery';
export const PASSWORDS: Record<string, string> = {
  [AMARA.email]: PASSWORD,
  [TOMASZ.email]: PASSWORD,
  [ROSALIND.email]: PASSWORD,
};

function jwtFor(userId: string, exp: number, serial: number): string {
  const enc = (value: object) =>
    btoa(JSON.stringify(value)).replace(/=+$/, '').replace(/\+/g, '-').replace(/\//g, '_');
  return `${enc({ alg: 'HS256', typ: 'JWT' })}.${enc({ sub: userId, exp, n: serial })}.signature`;
}

export interface FakeClinicServer {
  fetch: FetchLike;
  /** Every request seen, as "METHOD /path" with the bearer's user id if any. */
  calls: { route: string; userId: string | null; body: unknown }[];
  refuseRefresh: 'no' | 'unauthorized' | 'revoked' | 'offline';
  /** GET /api/me/sites fails as with no network. */
  offline: boolean;
  deviceState: 'active' | 'retired' | 'revoked';
  /** The clinic setting GET /api/devices/me carries (left out when undefined). */
  unsyncedWarningHours?: number;
  /** The clinic's rule for tablets without a platform authenticator (left out when undefined). */
  unlockWithoutHardware?: unknown;
  /** The sites the tablet may hold now (absent: a server from before the field). */
  holdSiteIds?: string[];
  enrolmentCode: string;
  accessTtlSeconds: number;
  /** Extra routes a test answers itself (admin screens): null means "not mine". */
  adminRoutes?: (
    route: string,
    body: unknown,
    callerId: string | null,
  ) => { status: number; body: unknown } | null;
  /** The user id a currently valid access token belongs to. */
  whoseToken(token: string): string | null;
}

export function fakeClinicServer(now: () => number): FakeClinicServer {
  let serial = 0;
  const access = new Map<string, { userId: string; exp: number }>();
  const refresh = new Map<string, { userId: string; spent: boolean }>();
  const users = new Map([AMARA, TOMASZ, ROSALIND].map((u) => [u.email, u]));
  const byId = new Map([AMARA, TOMASZ, ROSALIND].map((u) => [u.id, u]));
  const deviceSecret = 'tablet-secret-for-tests';

  const json = (status: number, body: unknown) =>
    new Response(JSON.stringify(body), {
      status,
      headers: { 'content-type': 'application/json' },
    });

  const issue = (user: SessionUser) => {
    serial += 1;
    const exp = Math.floor(now() / 1000) + server.accessTtlSeconds;
    const accessToken = jwtFor(user.id, exp, serial);
    access.set(accessToken, { userId: user.id, exp: exp * 1000 });
    const refreshToken = `refresh-${user.id}-${serial}`;
    refresh.set(refreshToken, { userId: user.id, spent: false });
    return { accessToken, refreshToken, user };
  };

  const server: FakeClinicServer = {
    calls: [],
    refuseRefresh: 'no',
    offline: false,
    deviceState: 'active',
    enrolmentCode: 'K7Q2M9XD',
    accessTtlSeconds: 600,
    whoseToken(token) {
      const entry = access.get(token);
      return entry && entry.exp > now() ? entry.userId : null;
    },
    async fetch(input, init) {
      const path = new URL(input, 'http://tablet.test').pathname;
      const method = init?.method ?? 'GET';
      const body: unknown = init?.body ? JSON.parse(String(init.body)) : undefined;
      const bearer = (
        (init?.headers as Record<string, string> | undefined)?.authorization ?? ''
      ).replace(/^Bearer /, '');
      const caller = bearer ? server.whoseToken(bearer) : null;
      server.calls.push({ route: `${method} ${path}`, userId: caller, body });
      const revoked = () =>
        json(401, {
          message: 'This tablet has been revoked; it must erase its local data.',
          erase: true,
        });

      switch (`${method} ${path}`) {
        case 'POST /api/auth/login': {
          const { email, password, deviceSecret: secret } = body as Record<string, string>;
          if (secret !== undefined && server.deviceState === 'revoked') return revoked();
          const user = users.get(email ?? '');
          if (!user || PASSWORDS[user.email] !== password) {
            return json(401, {
              message: 'That e-mail address and password do not match an active account.',
            });
          }
          return json(201, issue(user));
        }
        case 'POST /api/auth/refresh': {
          if (server.refuseRefresh === 'offline') throw new TypeError('Failed to fetch');
          if (server.refuseRefresh === 'revoked' || server.deviceState === 'revoked')
            return revoked();
          const presented = (body as { refreshToken: string }).refreshToken;
          const entry = refresh.get(presented);
          if (server.refuseRefresh === 'unauthorized' || !entry) {
            return json(401, { message: 'This refresh token is not valid; sign in again.' });
          }
          if (entry.spent)
            return json(401, {
              message:
                'This sign-in was ended because its refresh token was used twice; sign in again.',
            });
          entry.spent = true;
          return json(201, issue(byId.get(entry.userId)!));
        }
        case 'POST /api/auth/logout':
          return new Response(null, { status: caller ? 204 : 401 });
        case 'POST /api/devices/enrol': {
          const { code } = body as { code: string };
          if (code !== server.enrolmentCode) {
            return json(400, { message: 'code: this enrolment code is not valid or has expired.' });
          }
          return json(201, { deviceId: '0190c6a0-0000-7000-8000-0000000000d1', deviceSecret });
        }
        case 'GET /api/devices/me':
          if (server.deviceState === 'revoked') return revoked();
          if (!caller) return json(401, { message: 'Sign in first.' });
          return json(200, {
            state: server.deviceState,
            ...(server.unsyncedWarningHours === undefined
              ? {}
              : { unsyncedWarningHours: server.unsyncedWarningHours }),
            ...(server.unlockWithoutHardware === undefined
              ? {}
              : { unlockWithoutHardware: server.unlockWithoutHardware }),
            ...(server.holdSiteIds ? { holdSiteIds: server.holdSiteIds } : {}),
          });
        case 'GET /api/me/sites': {
          if (server.deviceState === 'revoked') return revoked();
          if (server.offline) throw new TypeError('Failed to fetch');
          if (!caller) return json(401, { message: 'Sign in first.' });
          const person = byId.get(caller);
          return json(
            200,
            SITES.filter((site) => person?.siteIds.includes(site.id)),
          );
        }
        case 'GET /api/me/colleagues': {
          if (server.deviceState === 'revoked') return revoked();
          if (server.offline) throw new TypeError('Failed to fetch');
          if (!caller) return json(401, { message: 'Sign in first.' });
          const mine = byId.get(caller)?.siteIds ?? [];
          return json(
            200,
            [...byId.values()]
              .filter((p) => p.siteIds.some((site) => mine.includes(site)))
              .map((p) => ({ id: p.id, name: p.name, role: p.role }))
              .sort((a, b) => a.name.localeCompare(b.name)),
          );
        }
        case 'GET /api/devices/me/key-share':
          if (server.deviceState === 'revoked') return revoked();
          if (server.offline) throw new TypeError('Failed to fetch');
          if (!caller) return json(401, { message: 'Sign in first.' });
          // The same 32 bytes for every person on this tablet, as the server derives them.
          return json(200, { share: btoa(String.fromCharCode(...new Uint8Array(32).fill(7))) });
        case 'POST /api/devices/heartbeat':
          if (server.deviceState === 'revoked') return revoked();
          return caller
            ? json(201, {
                ok: true,
                ...(server.holdSiteIds ? { holdSiteIds: server.holdSiteIds } : {}),
              })
            : json(401, { message: 'Sign in first.' });
        default: {
          const extra = server.adminRoutes?.(`${method} ${path}`, body, caller);
          if (extra) return json(extra.status, extra.body);
          return json(404, { message: `No route ${method} ${path}` });
        }
      }
    },
  };
  return server;
}
