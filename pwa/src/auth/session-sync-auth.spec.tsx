import { render, screen } from '@testing-library/react';
import { MemoryRouter } from 'react-router-dom';
import { beforeEach, describe, expect, it } from 'vitest';
import { FuselightDb, type OutboxEntry } from '../data/db';
import { AuthDb } from './auth-db';
import {
  AMARA,
  PASSWORDS,
  SITE_A,
  SITE_B,
  TOMASZ,
  fakeClinicServer,
} from './fake-clinic-server.fixture';
import { IdentityApi } from './identity-api';
import { countOutboxEntries } from './outbox-count';
import { SessionProvider } from './SessionProvider';
import { SessionStore } from './session-store';
import { SessionSyncAuth } from './session-sync-auth';
import { SignInPrompt } from './SignInPrompt';
import { eraseAllDatabases, readErasureNote } from './tablet-erasure';

const DEVICE_ID = '0190c6a0-0000-7000-8000-0000000000d1';

function setUp() {
  const clock = { now: Date.UTC(2026, 11, 1, 8, 0) };
  const server = fakeClinicServer(() => clock.now);
  const store = new SessionStore({
    api: new IdentityApi({ fetch: server.fetch }),
    now: () => clock.now,
    countOutbox: countOutboxEntries,
  });
  return { clock, server, store, syncAuth: new SessionSyncAuth(store) };
}

async function signIn(store: SessionStore, email: string) {
  await store.signIn({ email, password: PASSWORDS[email]! });
}

function outboxEntry(seq: number, authorId: string): OutboxEntry {
  return {
    changeId: `0190c6d2-0000-7000-8000-${String(seq).padStart(12, '0')}`,
    seq,
    collection: 'patient',
    recordId: `0190c6d1-0000-7000-8000-${String(seq).padStart(12, '0')}`,
    baseVersion: 0,
    hlc: `001796112000000-${String(seq).padStart(5, '0')}-${DEVICE_ID}`,
    fields: { familyName: `Invented${seq}` },
    authorId,
    deviceId: DEVICE_ID,
    createdAt: seq,
    updatedAt: seq,
    state: 'pending',
    error: null,
    attempts: 1,
  };
}

beforeEach(async () => {
  await eraseAllDatabases();
  localStorage.clear();
});

describe('the sync engine’s tokens', () => {
  it('hands each author their own token after switching person on a shared tablet', async () => {
    const { store, server, syncAuth } = setUp();
    await store.load();
    await store.enrol(server.enrolmentCode);
    await signIn(store, AMARA.email);
    await store.switchPerson();
    await signIn(store, TOMASZ.email);
    expect(store.getSnapshot().activeUser?.id).toBe(TOMASZ.id);

    const amaraToken = await syncAuth.tokenFor(AMARA.id);
    const tomaszToken = await syncAuth.tokenFor(TOMASZ.id);
    expect(amaraToken).not.toBe(tomaszToken);
    expect(server.whoseToken(amaraToken!)).toBe(AMARA.id);
    expect(server.whoseToken(tomaszToken!)).toBe(TOMASZ.id);
    expect(await syncAuth.tokenFor('0190c6a0-0000-7000-8000-0000000000ff')).toBeNull();
  });

  it('refreshes an expired token under its own author, not the person using the tablet', async () => {
    const { store, server, clock, syncAuth } = setUp();
    await store.load();
    await signIn(store, AMARA.email);
    await store.switchPerson();
    await signIn(store, TOMASZ.email);
    clock.now += 15 * 60_000;
    const token = await syncAuth.tokenFor(AMARA.id);
    expect(server.whoseToken(token!)).toBe(AMARA.id);
    const refresh = server.calls.filter((c) => c.route === 'POST /api/auth/refresh');
    expect(refresh).toHaveLength(1);
    expect(String((refresh[0]!.body as { refreshToken: string }).refreshToken)).toContain(AMARA.id);
  });

  it('refreshes after the server refuses a token that had not yet expired', async () => {
    const { store, server, syncAuth } = setUp();
    await store.load();
    await signIn(store, AMARA.email);
    const before = await syncAuth.tokenFor(AMARA.id);
    await syncAuth.onUnauthorized(AMARA.id);
    const after = await syncAuth.tokenFor(AMARA.id);
    expect(after).not.toBe(before);
    expect(server.whoseToken(after!)).toBe(AMARA.id);
  });

  it('keeps every Outbox entry and asks the author to sign in when the refresh is refused', async () => {
    const { store, server, clock, syncAuth } = setUp();
    await store.load();
    await store.enrol(server.enrolmentCode);
    await signIn(store, AMARA.email);
    const records = new FuselightDb();
    const entries = [1, 2, 3].map((seq) => outboxEntry(seq, AMARA.id));
    await records.outbox.bulkAdd(entries);

    clock.now += 20 * 60_000;
    server.refuseRefresh = 'unauthorized';
    expect(await syncAuth.tokenFor(AMARA.id)).toBeNull();
    await syncAuth.onUnauthorized(AMARA.id);

    expect(await records.outbox.orderBy('seq').toArray()).toEqual(entries);
    expect(store.getSnapshot().prompts).toEqual([
      expect.objectContaining({ userId: AMARA.id, waitingChanges: 3 }),
    ]);
    render(
      <MemoryRouter>
        <SessionProvider store={store} background={false}>
          <SignInPrompt />
        </SessionProvider>
      </MemoryRouter>,
    );
    expect((await screen.findByRole('alert')).textContent).toMatch(
      /Amara Lindqvist needs to sign in again/,
    );
    expect(screen.getByRole('alert').textContent).toMatch(
      /3 of their changes are kept in the Outbox/,
    );
    const signInButton = screen.getByText('Sign in as Amara Lindqvist');
    expect(signInButton.tagName).toBe('BUTTON');
    expect(screen.getByRole('alert').contains(signInButton)).toBe(true);

    // Signing in again clears the prompt and the entries are still there to be sent.
    server.refuseRefresh = 'no';
    await signIn(store, AMARA.email);
    expect(store.getSnapshot().prompts).toEqual([]);
    expect(server.whoseToken((await syncAuth.tokenFor(AMARA.id))!)).toBe(AMARA.id);
    expect(await records.outbox.count()).toBe(3);
    records.close();
  });

  it('keeps the session when the refresh cannot reach the server', async () => {
    const { store, server, clock, syncAuth } = setUp();
    await store.load();
    await signIn(store, AMARA.email);
    clock.now += 20 * 60_000;
    server.refuseRefresh = 'offline';
    expect(await syncAuth.tokenFor(AMARA.id)).toBeNull();
    expect(store.getSnapshot().prompts).toEqual([]);
    server.refuseRefresh = 'no';
    expect(await syncAuth.tokenFor(AMARA.id)).not.toBeNull();
  });
});

describe('a tablet the clinic takes back', () => {
  it('erases every database of the app when the server says the tablet is revoked', async () => {
    const { store, server, clock, syncAuth } = setUp();
    await store.load();
    await store.enrol(server.enrolmentCode);
    await signIn(store, AMARA.email);
    const records = new FuselightDb();
    await records.outbox.bulkAdd([outboxEntry(1, AMARA.id)]);
    records.close();
    const names = (await indexedDB.databases()).map((d) => d.name);
    expect(names).toEqual(expect.arrayContaining(['fuselight', 'fuselight-auth']));

    server.deviceState = 'revoked';
    clock.now += 20 * 60_000;
    expect(await syncAuth.tokenFor(AMARA.id)).toBeNull();

    expect(await indexedDB.databases()).toEqual([]);
    const snapshot = store.getSnapshot();
    expect(snapshot.erasure?.cause).toBe('revoked');
    expect(snapshot.erasure?.message).toMatch(/revoked/);
    expect(snapshot.activeUser).toBeNull();
    expect(snapshot.tablet).toBeNull();
    expect(readErasureNote()?.cause).toBe('revoked');
  });

  it('waits for a retired tablet’s Outbox to empty before erasing it', async () => {
    const { store, server } = setUp();
    await store.load();
    await store.enrol(server.enrolmentCode);
    await signIn(store, AMARA.email);
    const records = new FuselightDb();
    await records.outbox.bulkAdd([outboxEntry(1, AMARA.id), outboxEntry(2, AMARA.id)]);

    server.deviceState = 'retired';
    await store.checkTablet();
    expect(store.getSnapshot().retirement).toEqual({ waitingChanges: 2 });
    expect(await records.outbox.count()).toBe(2);
    const auth = new AuthDb();
    expect(await auth.tablet.get('tablet')).toMatchObject({ state: 'retired' });
    auth.close();

    // The sync engine sends them; then the tablet erases itself.
    await records.outbox.clear();
    records.close();
    await store.continueRetirement();
    expect(await indexedDB.databases()).toEqual([]);
    expect(store.getSnapshot().erasure?.cause).toBe('retired');
  });

  it('reports its app version and Outbox size in the heartbeat', async () => {
    const { store, server } = setUp();
    await store.load();
    await store.enrol(server.enrolmentCode);
    await signIn(store, AMARA.email);
    const records = new FuselightDb();
    await records.outbox.bulkAdd([outboxEntry(1, AMARA.id)]);
    records.close();
    await store.heartbeat('0.1.0');
    const beat = server.calls.find((c) => c.route === 'POST /api/devices/heartbeat');
    expect(beat).toMatchObject({ userId: AMARA.id, body: { appVersion: '0.1.0', outboxSize: 1 } });
  });

  it('hands the sites the server says the tablet may hold to the site scope, with their names', async () => {
    const clock = { now: Date.UTC(2026, 11, 1, 8, 0) };
    const server = fakeClinicServer(() => clock.now);
    const calls: Array<{ hold: readonly string[]; names: (string | null)[] }> = [];
    const store = new SessionStore({
      api: new IdentityApi({ fetch: server.fetch }),
      now: () => clock.now,
      countOutbox: countOutboxEntries,
      applySiteScope: async (hold, siteName) => {
        calls.push({ hold, names: [SITE_A, SITE_B].map(siteName) });
      },
    });
    await store.load();
    await store.enrol(server.enrolmentCode);
    await signIn(store, AMARA.email);
    await store.refreshSites();
    // A server from before the field: nothing is removed.
    await store.heartbeat('0.1.0');
    await store.checkTablet();
    expect(calls).toEqual([]);
    server.holdSiteIds = [SITE_A];
    await store.heartbeat('0.1.0');
    await store.checkTablet();
    expect(calls).toEqual([
      { hold: [SITE_A], names: ['Harbourview Eye Clinic', 'Saltmarsh School (outreach)'] },
      { hold: [SITE_A], names: ['Harbourview Eye Clinic', 'Saltmarsh School (outreach)'] },
    ]);
  });

  it('reports in its heartbeat how its data key is protected: PIN only, then passphrase', async () => {
    const { store, server } = setUp();
    await store.load();
    await store.enrol(server.enrolmentCode);
    await signIn(store, AMARA.email);
    const reported = async () => {
      await store.heartbeat('0.1.0');
      const beats = server.calls.filter((c) => c.route === 'POST /api/devices/heartbeat');
      return (beats.at(-1)?.body as { keyProtection?: string }).keyProtection;
    };
    await store.setPin('482913');
    expect(await reported()).toBe('pin-only');
    await store.setPin('harbour lights at dusk');
    expect(await reported()).toBe('passphrase');
  });
});
