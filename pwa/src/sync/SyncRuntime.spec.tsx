import { act, render } from '@testing-library/react';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { AMARA, PASSWORDS, fakeClinicServer } from '../auth/fake-clinic-server.fixture';
import { IdentityApi } from '../auth/identity-api';
import { countOutboxEntries } from '../auth/outbox-count';
import { SessionProvider } from '../auth/SessionProvider';
import { SessionStore } from '../auth/session-store';
import { SessionSyncAuth } from '../auth/session-sync-auth';
import { eraseAllDatabases } from '../auth/tablet-erasure';
import { SyncRuntime } from './SyncRuntime';
import { getSyncEngine, stopSync } from './sync-runtime';

async function signedInTablet() {
  const clock = { now: Date.UTC(2026, 11, 1, 8, 0) };
  const server = fakeClinicServer(() => clock.now);
  const store = new SessionStore({
    api: new IdentityApi({ fetch: server.fetch }),
    now: () => clock.now,
    countOutbox: countOutboxEntries,
  });
  await store.load();
  await store.enrol(server.enrolmentCode);
  await store.signIn({ email: AMARA.email, password: PASSWORDS[AMARA.email]! });
  return { clock, server, store };
}

const heartbeats = (server: ReturnType<typeof fakeClinicServer>) =>
  server.calls.filter((call) => call.route === 'POST /api/devices/heartbeat').length;

beforeEach(async () => {
  await eraseAllDatabases();
  localStorage.clear();
});
afterEach(() => stopSync());

describe('SyncRuntime', () => {
  it('starts the engine a task after it mounts, and sends a heartbeat after each sync', async () => {
    const { clock, server, store } = await signedInTablet();
    render(
      <SessionProvider store={store} background={false}>
        <SyncRuntime auth={new SessionSyncAuth(store)} baseUrl="http://clinic.invalid" />
      </SessionProvider>,
    );
    // Mounted with the first screen: the engine starts in a task of its own.
    expect(getSyncEngine()).toBeNull();
    await act(() => new Promise((resolve) => setTimeout(resolve, 0)));
    const engine = getSyncEngine();
    expect(engine).not.toBeNull();

    const before = heartbeats(server);
    act(() => engine!.status.update({ lastSyncedAt: clock.now }));
    await vi.waitFor(() => expect(heartbeats(server)).toBe(before + 1));

    // A status change that is not a new sync sends none.
    act(() => engine!.status.update({ online: false }));
    act(() => engine!.status.update({ lastSyncedAt: clock.now }));
    await new Promise((resolve) => setTimeout(resolve, 20));
    expect(heartbeats(server)).toBe(before + 1);

    clock.now += 60_000;
    act(() => engine!.status.update({ lastSyncedAt: clock.now }));
    await vi.waitFor(() => expect(heartbeats(server)).toBe(before + 2));
  });

  it('starts no engine when unmounted before its task comes', async () => {
    const { store } = await signedInTablet();
    const view = render(
      <SessionProvider store={store} background={false}>
        <SyncRuntime auth={new SessionSyncAuth(store)} baseUrl="http://clinic.invalid" />
      </SessionProvider>,
    );
    view.unmount();
    await new Promise((resolve) => setTimeout(resolve, 10));
    expect(getSyncEngine()).toBeNull();
  });
});
