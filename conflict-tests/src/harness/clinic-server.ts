// The real clinic server, in process, on an ephemeral port, with its own database cloned from the
// migrated template; people and tablets are made through the identity factories.
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
  baseUrl: string;
  siteId: string;
  person(role: Role, options?: { siteIds?: string[] }): Promise<TestUser>;
  device(options?: { siteIds?: string[] }): Promise<TestDevice>;
  revoke(deviceId: string): Promise<void>;
  /** The server's time as the tablets' clocks start from. */
  nowMs(): number;
  close(): Promise<void>;
}

export async function startClinic(): Promise<Clinic> {
  const t = await createTestApp();
  await t.app.listen(0, '127.0.0.1');
  const address = t.app.getHttpServer().address();
  if (address === null || typeof address === 'string')
    throw new Error('the server did not listen on a port');
  const site = await createSite(t);
  return {
    t,
    baseUrl: `http://127.0.0.1:${address.port}`,
    siteId: site.id,
    person: (role, options = {}) => createUser(t, { role, siteIds: options.siteIds ?? [site.id] }),
    device: (options = {}) => createDevice(t, { siteIds: options.siteIds ?? [site.id] }),
    revoke: (deviceId) => revokeDevice(t, deviceId),
    nowMs: () => t.clock.now().getTime(),
    close: () => t.close(),
  };
}
