import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { FuselightDb } from '../data/db';
import { AuthDb } from './auth-db';
import {
  AMARA,
  PASSWORDS,
  TOMASZ,
  SITE_B,
  fakeClinicServer,
  type FakeClinicServer,
} from './fake-clinic-server.fixture';
import { IdentityApi } from './identity-api';
import { PERSISTENCE_ASKED_KEY } from './session/tablet-lifecycle';
import { SessionStore } from './session-store';
import { eraseAllDatabases } from './tablet-erasure';

const HOUR = 3_600_000;

function setUp(options: { countOutbox?: (authorId?: string) => Promise<number> } = {}) {
  const clock = { now: Date.UTC(2026, 11, 1, 8, 0) };
  const server: FakeClinicServer = fakeClinicServer(() => clock.now);
  const make = () =>
    new SessionStore({
      api: new IdentityApi({ fetch: server.fetch }),
      now: () => clock.now,
      countOutbox: options.countOutbox ?? (async () => 0),
    });
  return { clock, server, store: make(), make };
}

async function enrolledWithPin(pin = '482913') {
  const setup = setUp();
  await setup.store.load();
  await setup.store.enrol(setup.server.enrolmentCode);
  await setup.store.signIn({ email: AMARA.email, password: PASSWORDS[AMARA.email]! });
  await setup.store.setPin(pin);
  await setup.store.switchPerson();
  return setup;
}

beforeEach(async () => {
  await eraseAllDatabases();
  localStorage.clear();
});

describe('offline unlock with a PIN', () => {
  it('unlocks with the PIN while offline within the offline window', async () => {
    const { store, server, clock } = await enrolledWithPin();
    server.refuseRefresh = 'offline';
    clock.now += 71 * HOUR;
    expect(store.getSnapshot().activeUser).toBeNull();
    const result = await store.unlock(AMARA.id, '482913');
    expect(result).toEqual({ ok: true });
    expect(store.getSnapshot().activeUser?.id).toBe(AMARA.id);
  });

  it('refuses the right PIN once the offline window has closed', async () => {
    const { store, clock } = await enrolledWithPin();
    clock.now += 72 * HOUR + 1;
    const result = await store.unlock(AMARA.id, '482913');
    expect(result).toMatchObject({ ok: false, reason: 'window-closed' });
    expect(store.getSnapshot().activeUser).toBeNull();
    expect(store.getSnapshot().people[0]?.canUnlockWithPin).toBe(false);
  });

  it('measures the window in the hours the clinic set', async () => {
    const { store, clock } = await enrolledWithPin();
    await store.setPolicy({ offlineUnlockHours: 8 });
    clock.now += 9 * HOUR;
    expect(await store.unlock(AMARA.id, '482913')).toMatchObject({
      ok: false,
      reason: 'window-closed',
    });
  });

  it('locks the PIN out after five wrong tries, even for the right PIN, until an online sign-in', async () => {
    const { store } = await enrolledWithPin();
    const answers = [];
    for (let i = 0; i < 5; i += 1) answers.push(await store.unlock(AMARA.id, '000000'));
    expect(answers.map((a) => (a.ok ? 'ok' : a.attemptsLeft))).toEqual([4, 3, 2, 1, 0]);
    expect(answers[4]).toMatchObject({ reason: 'locked-out' });
    expect(await store.unlock(AMARA.id, '482913')).toMatchObject({
      ok: false,
      reason: 'locked-out',
    });

    await store.signIn({ email: AMARA.email, password: PASSWORDS[AMARA.email]! });
    await store.switchPerson();
    expect(await store.unlock(AMARA.id, '482913')).toEqual({ ok: true });
  });

  it('keeps the attempt count across a reload of the app', async () => {
    const { store, make } = await enrolledWithPin();
    await store.unlock(AMARA.id, '111111');
    await store.unlock(AMARA.id, '222222');
    const reloaded = make();
    await reloaded.load();
    expect(reloaded.getSnapshot().people[0]?.pinAttemptsLeft).toBe(3);
  });

  it('stores nothing of the PIN but an argon2id key slot of at least 19 MiB and 2 passes', async () => {
    await enrolledWithPin('482913');
    const db = new AuthDb();
    const [row] = await db.pins.toArray();
    db.close();
    expect(row).toMatchObject({ userId: AMARA.id, keySlot: true, failedAttempts: 0 });
    expect(row?.hash).toBeUndefined();
    expect(JSON.stringify(row)).not.toContain('482913');
    const records = new FuselightDb();
    const slots = await records.keySlots.toArray();
    records.close();
    // The person's slot, and the one an online sign-in opens with the server's share.
    expect(slots.map((slot) => slot.id).sort()).toEqual([`pin:${AMARA.id}`, 'server']);
    expect(slots.find((slot) => slot.kind === 'pin')?.kdf).toMatchObject({
      name: 'argon2id',
      iterations: 2,
    });
    expect(slots.find((slot) => slot.kind === 'pin')!.kdf!.memoryKiB).toBeGreaterThanOrEqual(
      19 * 1024,
    );
  });

  it('refuses a PIN shorter than 6 digits (a passphrase of 12 characters is taken)', async () => {
    const { store } = setUp();
    await store.load();
    await store.enrol('K7Q2M9XD');
    await store.signIn({ email: AMARA.email, password: PASSWORDS[AMARA.email]! });
    await expect(store.setPin('12a4')).rejects.toThrow('A PIN is at least 6 digits');
    await expect(store.setPin('12345')).rejects.toThrow('A PIN is at least 6 digits');
    await expect(store.setPin('correct horse')).resolves.toBeUndefined();
  });
});

describe('sessions on a shared tablet', () => {
  it('binds a sign-in on an enrolled tablet to the tablet with its device secret', async () => {
    const { store, server } = setUp();
    await store.load();
    await store.enrol('K7Q2M9XD');
    await store.signIn({ email: AMARA.email, password: PASSWORDS[AMARA.email]! });
    const login = server.calls.find((c) => c.route === 'POST /api/auth/login');
    expect(login?.body).toMatchObject({
      email: AMARA.email,
      deviceSecret: 'tablet-secret-for-tests',
    });
  });

  it('survives a reload with the same person, tablet and site', async () => {
    const { store, make } = setUp();
    await store.load();
    await store.enrol('K7Q2M9XD');
    await store.signIn({ email: AMARA.email, password: PASSWORDS[AMARA.email]! });
    await store.setActiveSite(SITE_B);
    const reloaded = make();
    await reloaded.load();
    const snapshot = reloaded.getSnapshot();
    expect(snapshot.activeUser?.id).toBe(AMARA.id);
    expect(snapshot.activeSiteId).toBe(SITE_B);
    expect(snapshot.tablet?.deviceId).toBe('0190c6a0-0000-7000-8000-0000000000d1');
  });

  it('will not make a site active that is not one of the person’s', async () => {
    const { store } = setUp();
    await store.load();
    await store.signIn({ email: TOMASZ.email, password: PASSWORDS[TOMASZ.email]! });
    await expect(store.setActiveSite(SITE_B)).rejects.toThrow(/not one of yours/);
  });

  it('refreshes one person’s token only once when asked twice at the same time', async () => {
    const { store, server, clock } = setUp();
    await store.load();
    await store.signIn({ email: AMARA.email, password: PASSWORDS[AMARA.email]! });
    clock.now += 11 * 60_000;
    const [first, second] = await Promise.all([store.tokenFor(AMARA.id), store.tokenFor(AMARA.id)]);
    expect(first).not.toBeNull();
    expect(first).toBe(second);
    expect(server.calls.filter((c) => c.route === 'POST /api/auth/refresh')).toHaveLength(1);
    expect(store.getSnapshot().prompts).toEqual([]);
  });

  it('keeps a person listed with a prompt when they sign out with changes still waiting', async () => {
    const { store } = setUp({ countOutbox: async (authorId) => (authorId === AMARA.id ? 2 : 0) });
    await store.load();
    await store.signIn({ email: AMARA.email, password: PASSWORDS[AMARA.email]! });
    await store.signOut();
    const snapshot = store.getSnapshot();
    expect(snapshot.activeUser).toBeNull();
    expect(snapshot.prompts).toEqual([
      expect.objectContaining({ userId: AMARA.id, waitingChanges: 2 }),
    ]);
  });
});

describe('site names', () => {
  it('keeps the names of the person’s sites from GET /api/me/sites, and shows them offline after a restart', async () => {
    const { store, server, make } = setUp();
    await store.load();
    await store.enrol(server.enrolmentCode);
    await store.signIn({ email: AMARA.email, password: PASSWORDS[AMARA.email]! });
    await store.refreshSites();
    expect(server.calls.map((c) => c.route)).toContain('GET /api/me/sites');
    expect(store.getSnapshot().sites[SITE_B]).toMatchObject({
      name: 'Saltmarsh School (outreach)',
      kind: 'outreach',
    });

    server.offline = true;
    const restarted = make();
    await restarted.load();
    await restarted.refreshSites();
    expect(
      Object.values(restarted.getSnapshot().sites)
        .map((s) => s.name)
        .sort(),
    ).toEqual(['Harbourview Eye Clinic', 'Saltmarsh School (outreach)']);
  });

  it('forgets the names when the tablet is erased', async () => {
    const { store, server } = setUp();
    await store.load();
    await store.enrol(server.enrolmentCode);
    await store.signIn({ email: TOMASZ.email, password: PASSWORDS[TOMASZ.email]! });
    await store.refreshSites();
    expect(Object.keys(store.getSnapshot().sites)).toHaveLength(1);
    server.deviceState = 'revoked';
    await store.refreshSites();
    expect(store.getSnapshot().erasure?.cause).toBe('revoked');
    expect(store.getSnapshot().sites).toEqual({});
  });
});

describe('colleague names', () => {
  it('keeps the names of the people who share the person’s sites, and shows them offline after a restart', async () => {
    const { store, server, make } = setUp();
    await store.load();
    await store.enrol(server.enrolmentCode);
    await store.signIn({ email: TOMASZ.email, password: PASSWORDS[TOMASZ.email]! });
    await store.refreshSites();
    expect(server.calls.map((c) => c.route)).toContain('GET /api/me/colleagues');
    expect(store.getSnapshot().colleagues[AMARA.id]).toMatchObject({
      name: 'Amara Lindqvist',
      role: 'orthoptist',
    });

    server.offline = true;
    const restarted = make();
    await restarted.load();
    await restarted.refreshSites();
    expect(
      Object.values(restarted.getSnapshot().colleagues)
        .map((p) => p.name)
        .sort(),
    ).toEqual(['Amara Lindqvist', 'Rosalind Achterberg', 'Tomasz Okonjo']);
  });

  it('forgets them when the tablet is erased', async () => {
    const { store, server } = setUp();
    await store.load();
    await store.enrol(server.enrolmentCode);
    await store.signIn({ email: TOMASZ.email, password: PASSWORDS[TOMASZ.email]! });
    await store.refreshSites();
    expect(Object.keys(store.getSnapshot().colleagues).length).toBeGreaterThan(0);
    server.deviceState = 'revoked';
    await store.refreshSites();
    expect(store.getSnapshot().colleagues).toEqual({});
    expect(store.getSnapshot().sites).toEqual({});
  });
});

describe('GET /api/me/sites on the tablet', () => {
  it('refuses an answer that is not a list of sites, naming the field', async () => {
    const api = new IdentityApi({
      fetch: async () =>
        new Response(JSON.stringify([{ id: SITE_B, name: '', kind: 'clinic', timeZone: 'UTC' }]), {
          status: 200,
        }),
    });
    await expect(api.mySites('token')).rejects.toThrow(/name/);
  });
});

describe('the clinic’s setting for unsynced edits', () => {
  it('is 24 hours until the server says otherwise, then the server’s, kept across a reload', async () => {
    const { store, server, make } = await enrolledWithPin();
    expect(store.getSnapshot().policy.unsyncedWarningHours).toBe(24);
    server.unsyncedWarningHours = 6;
    await store.checkTablet();
    expect(store.getSnapshot().policy.unsyncedWarningHours).toBe(6);
    const reloaded = make();
    await reloaded.load();
    expect(reloaded.getSnapshot().policy.unsyncedWarningHours).toBe(6);
  });
});

describe('persistent storage at enrolment', () => {
  afterEach(() => {
    vi.unstubAllGlobals();
  });

  it('asks the browser to keep the tablet’s storage when it enrols, and notes the answer', async () => {
    const persist = vi.fn(async () => false);
    vi.stubGlobal('navigator', { ...navigator, storage: { persist } });
    const { store, server, clock } = setUp();
    await store.load();
    await store.enrol(server.enrolmentCode);
    expect(persist).toHaveBeenCalledTimes(1);
    const db = new AuthDb();
    expect((await db.settings.get(PERSISTENCE_ASKED_KEY))?.value).toEqual({
      granted: false,
      at: clock.now,
    });
    db.close();

    // Asked once: a later start does not ask again (some browsers ask the person each time).
    await store.askForPersistentStorageOnce();
    expect(persist).toHaveBeenCalledTimes(1);
  });

  it('asks a tablet enrolled before this was asked, once', async () => {
    const { store, server } = setUp();
    await store.load();
    await store.enrol(server.enrolmentCode); // no storage API here: nothing asked, nothing noted
    const persist = vi.fn(async () => true);
    vi.stubGlobal('navigator', { ...navigator, storage: { persist } });
    await store.askForPersistentStorageOnce();
    await store.askForPersistentStorageOnce();
    expect(persist).toHaveBeenCalledTimes(1);
  });
});
