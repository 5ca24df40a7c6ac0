// The protected tablet end to end on fake-indexeddb: key slots per person, wrong PINs, the
// server's share after an online sign-in, crypto-erase, and sealing an unencrypted database in
// place (docs/threat-model.md).
import Dexie from 'dexie';
import { beforeEach, describe, expect, it } from 'vitest';
import { AttachmentDb, getAttachmentDb } from '../attachments/attachment-db';
import { tabletVault, TabletLockedError } from '../data/crypto/data-key-vault';
import { rawDump } from '../data/crypto/raw-dump.fixture';
import { FuselightDb, getDefaultDb } from '../data/db';
import { OutboxRepository } from '../data/outbox-repository';
import { RecordsRepository, type EditContext } from '../data/records-repository';
import { DEVICE_ID, patientFields } from '../data/test-fixtures';
import {
  AMARA,
  PASSWORDS,
  TOMASZ,
  fakeClinicServer,
  type FakeClinicServer,
} from './fake-clinic-server.fixture';
import { oldestOutboxCreatedAt } from '../storage/useOldestUnsyncedAt';
import { AUTH_DB_NAME } from './auth-db';
import { IdentityApi } from './identity-api';
import { SessionStore } from './session-store';
import { eraseAllDatabases } from './tablet-erasure';

const SECRETS = ['Okafor', 'Amara', '2016-04-09', 'FL-000123', 'Esotropia noted at near'];

let clock = { now: Date.UTC(2026, 11, 1, 8, 0) };
const ctx = (authorId: string): EditContext => {
  clock.now += 1000;
  return { authorId, deviceId: DEVICE_ID, nowMs: clock.now };
};

function setUp(options: { eraseDatabases?: () => Promise<unknown> } = {}) {
  const server: FakeClinicServer = fakeClinicServer(() => clock.now);
  const make = () =>
    new SessionStore({
      api: new IdentityApi({ fetch: server.fetch }),
      now: () => clock.now,
      countOutbox: async () => 0,
      ...options,
    });
  return { server, store: make(), make };
}

const records = new RecordsRepository(getDefaultDb);
const outbox = new OutboxRepository(getDefaultDb);

async function signedInWithPin(store: SessionStore, server: FakeClinicServer, pin = '482913') {
  await store.load();
  await store.enrol(server.enrolmentCode);
  await store.signIn({ email: AMARA.email, password: PASSWORDS[AMARA.email]! });
  await store.setPin(pin);
}

beforeEach(async () => {
  await eraseAllDatabases();
  localStorage.clear();
  clock = { now: Date.UTC(2026, 11, 1, 8, 0) };
});

describe('a protected tablet', () => {
  it('seals what it stores; each person has their own slot; a wrong PIN erases nothing', async () => {
    const { store, server } = setUp();
    await signedInWithPin(store, server);
    const id = await records.create('patient', patientFields(), ctx(AMARA.id));
    await records.update('patient', id, { notes: SECRETS[4] } as never, ctx(AMARA.id));

    // Locked: nothing can be read, and the store holds no name, birth date or clinic number.
    await store.switchPerson();
    await expect(records.get('patient', id)).rejects.toBeInstanceOf(TabletLockedError);
    const before = await rawDump('fuselight');
    for (const secret of SECRETS) expect(before.text).not.toContain(secret);

    // Tomasz, new to this tablet, signs in online: the server's share opens the key for him.
    await store.signIn({ email: TOMASZ.email, password: PASSWORDS[TOMASZ.email]! });
    expect((await records.get('patient', id))?.fields.familyName).toBe('Okafor');
    await store.setPin('739204');
    const slots = (await getDefaultDb().keySlots.toArray()).map((slot) => slot.id).sort();
    expect(slots).toEqual([`pin:${AMARA.id}`, `pin:${TOMASZ.id}`, 'server']);
    await store.switchPerson();

    // A PIN opens its own person's slot only; a wrong one counts and changes nothing stored.
    expect(await store.unlock(AMARA.id, '739204')).toMatchObject({ reason: 'wrong-pin' });
    // The sealed records and Outbox entries are byte for byte what they were.
    const data = (text: string) => text.slice(text.indexOf('## outbox'));
    expect(data((await rawDump('fuselight')).text)).toBe(data(before.text));
    expect(await getDefaultDb().records.count()).toBe(1);
    expect(await getDefaultDb().outbox.count()).toBe(1);
    expect(await getDefaultDb().keySlots.count()).toBe(3);
    expect(await store.unlock(TOMASZ.id, '739204')).toEqual({ ok: true });
    expect((await records.get('patient', id))?.fields.givenName).toBe('Amara');
  });

  it('after too many wrong PINs asks for an online sign-in, and the Outbox waits for it, whole', async () => {
    const { store, server } = setUp();
    await signedInWithPin(store, server);
    const id = await records.create('patient', patientFields(), ctx(AMARA.id));
    const entries = await outbox.listEntries();
    await store.switchPerson();
    for (let i = 0; i < 5; i += 1) await store.unlock(AMARA.id, `00000${i}`);
    expect(await store.unlock(AMARA.id, '482913')).toMatchObject({
      ok: false,
      reason: 'locked-out',
      message: 'Too many wrong PINs. Sign in with your password while online.',
    });
    expect(await getDefaultDb().outbox.count()).toBe(1);

    await store.signIn({ email: AMARA.email, password: PASSWORDS[AMARA.email]! });
    expect(await outbox.listEntries()).toEqual(entries);
    expect((await records.get('patient', id))?.fields.clinicNumber).toBe('FL-000123');
  });

  it('starts locked after a reload: the key is in no one’s memory', async () => {
    const { store, server, make } = setUp();
    await signedInWithPin(store, server);
    await records.create('patient', patientFields(), ctx(AMARA.id));
    // A reload: a new page has an empty vault (not even marked protected) and loads the
    // session again; the key slots in the records database mark it protected.
    tabletVault.reset();
    expect(tabletVault.isProtected).toBe(false);
    getDefaultDb().close({ disableAutoOpen: false });
    const reloaded = make();
    await reloaded.load();
    expect(tabletVault.isProtected).toBe(true);
    expect(reloaded.getSnapshot().activeUser).toBeNull();
    expect(reloaded.getSnapshot().people[0]).toMatchObject({ canUnlockWithPin: true });
    await expect(records.list('patient')).rejects.toBeInstanceOf(TabletLockedError);
    expect(await reloaded.unlock(AMARA.id, '482913')).toEqual({ ok: true });
    expect((await records.list('patient')).map((p) => p.fields.familyName)).toEqual(['Okafor']);
  });

  it('opens a fresh tablet’s first screen without creating the records or session database', async () => {
    const { store, server } = setUp();
    const names = async () => (await indexedDB.databases()).map((database) => database.name);
    await store.load();
    expect(await oldestOutboxCreatedAt(getDefaultDb())).toBeNull();
    expect(store.getSnapshot().loaded).toBe(true);
    expect(store.getSnapshot().tablet).toBeNull();
    expect(store.getSnapshot().people).toEqual([]);
    expect(tabletVault.isProtected).toBe(false);
    expect(await names()).not.toContain('fuselight');
    expect(await names()).not.toContain(AUTH_DB_NAME);
    // Enrolling makes the session database; signing in and setting a PIN the records database,
    // with the slot, as before.
    await store.enrol(server.enrolmentCode);
    expect(await names()).toContain(AUTH_DB_NAME);
    await store.signIn({ email: AMARA.email, password: PASSWORDS[AMARA.email]! });
    await store.setPin('482913');
    expect(await names()).toContain('fuselight');
    expect(await getDefaultDb().keySlots.count()).toBeGreaterThan(0);
  });

  it('locks when idle: the key and the patient directory leave memory, and the PIN unlocks again', async () => {
    const { store, server } = setUp();
    await signedInWithPin(store, server);
    await records.create('patient', patientFields(), ctx(AMARA.id));
    expect((await records.searchPatients('okafor')).length).toBe(1);
    expect(store.getSnapshot().policy.idleLockMinutes).toBe(5);
    store.lock();
    expect(store.getSnapshot().activeUser).toBeNull();
    expect(tabletVault.unlocked).toBe(false);
    expect(getDefaultDb().patientDirectory.isReady).toBe(false);
    await expect(records.searchPatients('okafor')).rejects.toBeInstanceOf(TabletLockedError);
    expect(await store.unlock(AMARA.id, '482913')).toEqual({ ok: true });
    expect((await records.searchPatients('okafor')).length).toBe(1);
  });

  it('destroys every key slot before deleting the data when the clinic revokes it', async () => {
    const seen: number[] = [];
    const { store, server } = setUp({
      eraseDatabases: async () => {
        // What a copy taken at this instant would hold: the data, but no slot to open it.
        const db = new FuselightDb('fuselight');
        seen.push(await db.keySlots.count(), await db.records.count());
        db.close();
        return eraseAllDatabases();
      },
    });
    await signedInWithPin(store, server);
    await records.create('patient', patientFields(), ctx(AMARA.id));
    server.deviceState = 'revoked';
    await store.checkTablet();
    expect(seen).toEqual([0, 1]);
    expect(store.getSnapshot().erasure?.cause).toBe('revoked');
    expect(tabletVault.unlocked).toBe(false);
  });

  it('seals an unencrypted version 4 database in place at the first PIN, losing nothing', async () => {
    // The records database exactly as schema version 4 holds it, with a half-typed edit pending.
    const v4 = new Dexie('fuselight');
    v4.version(4).stores({
      records: '[collection+id], [collection+fields.visitId], [collection+fields.patientId]',
      outbox: 'changeId, &seq, [collection+recordId], state, authorId, createdAt',
      meta: 'key',
    });
    const patientId = '0190c6a0-0000-7000-8000-00000000b001';
    const stored = {
      collection: 'patient',
      id: patientId,
      version: 12,
      deleted: false,
      fields: { ...patientFields(), notes: 'Esotropia noted at ne' },
      conflicts: [],
      pendingFields: ['notes'],
      serverFields: {},
      updatedAt: 5,
    };
    const entries = [1, 2].map((n) => ({
      changeId: `0190c6a0-0000-7000-8000-0000000e000${n}`,
      seq: n,
      collection: 'patient',
      recordId: patientId,
      baseVersion: 12,
      hlc: `000000000000${n}00-00000-device-one`,
      fields: n === 1 ? { givenName: 'Amara' } : { notes: 'Esotropia noted at ne' },
      authorId: AMARA.id,
      deviceId: 'device-one',
      createdAt: n * 100,
      updatedAt: n * 100,
      state: n === 1 ? 'rejected' : 'pending',
      error: n === 1 ? 'Given name: Amara is already on file' : null,
      attempts: n - 1,
    }));
    const meta = [
      { key: 'outboxSeq', value: 2 },
      { key: 'pullCursor', value: 12 },
    ];
    await v4.table('records').put(stored);
    await v4.table('outbox').bulkPut(entries);
    await v4.table('meta').bulkPut(meta);
    v4.close();
    const file = new Uint8Array([...new TextEncoder().encode('%PDF referral for Amara Okafor')]);
    await getAttachmentDb().files.put({
      attachmentId: 'a1',
      sha256: 'f'.repeat(64),
      mimeType: 'application/pdf',
      byteSize: file.length,
      bytes: file.buffer,
      authorId: AMARA.id,
      createdAt: 1,
    });
    expect((await rawDump('fuselight')).text).toContain('Okafor');

    const { store, server } = setUp();
    await signedInWithPin(store, server);

    const after = await rawDump('fuselight');
    for (const secret of ['Okafor', 'Amara', '2016-04-09', 'FL-000123', 'Esotropia']) {
      expect(after.text).not.toContain(secret);
      expect((await rawDump('fuselight-attachments')).text).not.toContain(secret);
    }
    expect(await getDefaultDb().records.get([`patient`, patientId] as never)).toEqual(stored);
    expect(await getDefaultDb().outbox.orderBy('seq').toArray()).toEqual(entries);
    expect(
      (await getDefaultDb().meta.bulkGet(['outboxSeq', 'pullCursor'])).map((m) => m?.value),
    ).toEqual([2, 12]);
    const back = await new AttachmentDb().files.get('a1');
    expect(new TextDecoder().decode(back!.bytes)).toBe('%PDF referral for Amara Okafor');
  });
});
