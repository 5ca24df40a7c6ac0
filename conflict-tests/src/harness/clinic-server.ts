// The real clinic server, in process, on an ephemeral port, with its own database cloned from the
// migrated template; people and tablets are made through the identity factories. With
// `processes: 2` a second server instance (its own Nest container, database pool and listening
// connection, as a second server process has) serves the same database on a port of its own, and
// tablets can be spread over the two (`baseUrls`).
import type { Role } from '@fuselight/shared';
import { createTestApp, type TestApp } from '@server/testing/test-app';
import {
  createDevice,
  createSite,
  createUser,
  revokeDevice,
  type TestDevice,
  type TestUser,
} from '@server/testing/identity-factory';

export interface Clinic {
  t: TestApp;
  /** The first server's address. */
  baseUrl: string;
  /** Every server's address (one per server instance on the database). */
  baseUrls: string[];
  /** Every server instance; `t` is the first. */
  servers: TestApp[];
  siteId: string;
  person(role: Role, options?: { siteIds?: string[] }): Promise<TestUser>;
  device(options?: { siteIds?: string[] }): Promise<TestDevice>;
  revoke(deviceId: string): Promise<void>;
  /** The server's time as the tablets' clocks start from. */
  nowMs(): number;
  close(): Promise<void>;
}

async function listen(t: TestApp): Promise<string> {
  await t.app.listen(0, '127.0.0.1');
  const address = t.app.getHttpServer().address();
  if (address === null || typeof address === 'string')
    throw new Error('the server did not listen on a port');
  return `http://127.0.0.1:${address.port}`;
}

export async function startClinic(options: { processes?: number } = {}): Promise<Clinic> {
  const t = await createTestApp();
  const servers = [t];
  for (let i = 1; i < (options.processes ?? 1); i += 1) {
    servers.push(await createTestApp({ db: t.db, clock: t.clock }));
  }
  const baseUrls: string[] = [];
  for (const server of servers) baseUrls.push(await listen(server));
  const site = await createSite(t);
  return {
    t,
    baseUrl: baseUrls[0]!,
    baseUrls,
    servers,
    siteId: site.id,
    person: (role, options = {}) => createUser(t, { role, siteIds: options.siteIds ?? [site.id] }),
    device: (options = {}) => createDevice(t, { siteIds: options.siteIds ?? [site.id] }),
    revoke: (deviceId) => revokeDevice(t, deviceId),
    nowMs: () => t.clock.now().getTime(),
    close: async () => {
      for (const server of servers.slice(1)) await server.close();
      await t.close();
    },
  };
}
