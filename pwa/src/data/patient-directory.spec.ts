// The patient directory: the search answered from memory must say what the database holds, before
// its load, during it and after every committed write, whoever made the write.
import type { PulledRecord } from '@fuselight/shared';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { SyncEngine } from '../sync/sync-engine';
import { applyPushResults } from '../sync/local-apply';
import { FuselightDb, type StoredRecord } from './db';
import { nextChunkSize, sortTerms, type PatientEntry } from './patient-directory';
import { OutboxRepository } from './outbox-repository';
import { RecordsRepository, type EditContext } from './records-repository';
import { CLINICIAN_ID, DEVICE_ID, OTHER_SITE_ID, SITE_ID, patientFields } from './test-fixtures';

const opened: FuselightDb[] = [];
let now = 1_764_576_000_000;

function ctx(): EditContext {
  now += 1000;
  return { authorId: CLINICIAN_ID, deviceId: DEVICE_ID, nowMs: now };
}

function freshDb(name = `directory-${crypto.randomUUID()}`): FuselightDb {
  const db = new FuselightDb(name);
  opened.push(db);
  return db;
}

afterEach(async () => {
  for (const db of opened.splice(0)) {
    db.close();
    await db.delete();
  }
});

/** A stored patient as a pull would leave it (no pending edit). */
function storedPatient(index: number, overrides: Record<string, unknown> = {}): StoredRecord {
  return {
    collection: 'patient',
    id: `0190c6d2-0000-7000-8000-${String(index).padStart(12, '0')}`,
    version: index + 1,
    deleted: false,
    fields: patientFields({
      givenName: `Given${index}`,
      familyName: `Family${index}`,
      clinicNumber: `FL-${index}`,
      ...overrides,
    }),
    conflicts: [],
    pendingFields: [],
    serverFields: {},
    updatedAt: 0,
  };
}

const names = (found: Array<{ fields: { familyName: string } }>) =>
  found.map((patient) => patient.fields.familyName);

describe('the load step size', () => {
  it('halves after a step over its 1 ms budget, grows after a quick one, within 25 to 100', () => {
    expect(nextChunkSize(100, 3)).toBe(50);
    expect(nextChunkSize(30, 3)).toBe(25);
    expect(nextChunkSize(50, 0.2)).toBe(75);
    expect(nextChunkSize(75, 0.1)).toBe(100);
    expect(nextChunkSize(100, 0.1)).toBe(100);
    expect(nextChunkSize(100, 0.8)).toBe(100);
  });
});

describe('the sort that follows the load', () => {
  const entry = (id: string, terms: string[]): PatientEntry => ({
    id,
    siteId: null,
    terms,
    record: storedPatient(0),
  });

  it('orders every (term, patient) pair as one native sort would, a bounded piece at a time', () => {
    // Terms shared between patients and runs of different lengths: 1,234 entries is four whole
    // runs and a short fifth, so the last merge takes an odd run.
    const entries = Array.from({ length: 1234 }, (_, i) =>
      entry(`id-${(i * 7919) % 1234}`, [`t${i % 37}`, `u${(i * 13) % 101}`, `solo${i}`]),
    );
    const sorting = sortTerms(entries);
    let pieces = 0;
    let step = sorting.next();
    while (!step.done) {
      pieces += 1;
      step = sorting.next();
    }
    // The reference: every pair, sorted at once by JavaScript's own sort.
    const reference = entries
      .flatMap((e) => e.terms.map((term) => [term, e.id] as const))
      .sort(([ta, ia], [tb, ib]) => (ta < tb ? -1 : ta > tb ? 1 : ia < ib ? -1 : ia > ib ? 1 : 0));
    const { terms, owners } = step.value;
    expect(terms.map((term, i) => [term, owners[i]?.id])).toEqual(reference);
    // 3,702 pairs in five runs: more pieces than runs, so no piece did the whole sort.
    expect(pieces).toBeGreaterThan(10);
  });

  it('gives empty arrays for no patients', () => {
    const step = sortTerms([]).next();
    expect(step).toEqual({ done: true, value: { terms: [], owners: [] } });
  });
});

describe('the patient directory before and while it loads', () => {
  it('answers a search issued before it is loaded with what the database holds', async () => {
    const db = freshDb();
    // Written without the repositories, as an earlier session or a sync would have left them;
    // more than one load step's worth.
    await db.records.bulkPut(Array.from({ length: 2500 }, (_, i) => storedPatient(i)));
    await db.records.put({ ...storedPatient(2500, { familyName: 'Quennell' }), deleted: true });
    const records = new RecordsRepository(db);
    expect(db.patientDirectory.isReady).toBe(false);

    expect(names(await records.searchPatients('family2499'))).toEqual(['Family2499']);
    expect(db.patientDirectory.isReady).toBe(true);
    expect(db.patientDirectory.stats().patients).toBe(2500);
    expect(await records.searchPatients('quennell')).toEqual([]);
  });

  it('makes searches issued during the load wait for it, and keeps a write made meanwhile', async () => {
    const db = freshDb();
    await db.records.bulkPut(Array.from({ length: 3500 }, (_, i) => storedPatient(i)));
    const records = new RecordsRepository(db);
    // The last patients are read by the load's last steps.
    const lastId = storedPatient(3499).id;
    records.warmPatientSearch();
    const early = records.searchPatients('family3499');
    await records.update('patient', lastId, { familyName: 'Renamed' }, ctx());
    const afterWrite = records.searchPatients('renamed');
    const [earlyFound, renamed] = await Promise.all([early, afterWrite]);
    // The early search may run before or after the rename commits, never on half a directory.
    expect(earlyFound.length <= 1).toBe(true);
    expect(earlyFound.every((patient) => patient.id === lastId)).toBe(true);
    expect(renamed.map((patient) => patient.id)).toEqual([lastId]);
    expect(await records.searchPatients('family3499')).toEqual([]);
    expect(db.patientDirectory.stats().patients).toBe(3500);
  });

  it('keeps the writes that commit while the load sorts what it read', async () => {
    const db = freshDb();
    await db.records.bulkPut(Array.from({ length: 3000 }, (_, i) => storedPatient(i)));
    const records = new RecordsRepository(db);
    // One piece of the sort per slice, so the sort spans many tasks and the writes land in it.
    db.patientDirectory.sortSliceMs = 0;
    records.warmPatientSearch();
    for (let waits = 0; db.patientDirectory.phase !== 'sorting'; waits += 1) {
      expect(waits).toBeLessThan(10_000);
      await new Promise((resolve) => setTimeout(resolve, 0));
    }
    const renamed = storedPatient(10).id;
    await records.update('patient', renamed, { familyName: 'Sortwell' }, ctx());
    await records.remove('patient', storedPatient(20).id, ctx());
    const created = await records.create(
      'patient',
      patientFields({ familyName: 'Midsort' }),
      ctx(),
    );
    expect(db.patientDirectory.phase).toBe('sorting');

    await db.patientDirectory.whenReady();
    expect((await records.searchPatients('sortwell')).map((p) => p.id)).toEqual([renamed]);
    // "family10" also finds Family100 to Family1099: the renamed one must not be among them.
    const family10 = (await records.searchPatients('family10', { limit: 200 })).map((p) => p.id);
    expect(family10).toHaveLength(110);
    expect(family10).not.toContain(renamed);
    const family20 = (await records.searchPatients('family20', { limit: 200 })).map((p) => p.id);
    expect(family20).toHaveLength(110);
    expect(family20).not.toContain(storedPatient(20).id);
    expect((await records.searchPatients('midsort')).map((p) => p.id)).toEqual([created]);
    expect(db.patientDirectory.stats().patients).toBe(3000);
    // The same as a directory loaded from scratch afterwards, on another connection.
    const again = new FuselightDb(db.name);
    opened.push(again);
    await again.patientDirectory.whenReady();
    expect(again.patientDirectory.stats().terms).toBe(db.patientDirectory.stats().terms);
    for (const query of ['family1', 'given29', 'fl-2', 'midsort']) {
      const here = await records.searchPatients(query, { limit: 50 });
      const there = await new RecordsRepository(again).searchPatients(query, { limit: 50 });
      expect(here.map((p) => p.id)).toEqual(there.map((p) => p.id));
    }
  });

  it('reports a failed load to the search instead of an empty result', async () => {
    const db = freshDb();
    await db.records.put(storedPatient(1));
    db.close();
    await expect(new RecordsRepository(db).searchPatients('family1')).rejects.toThrow(/closed/i);
  });
});

describe('the patient directory after each committed write', () => {
  let db: FuselightDb;
  let records: RecordsRepository;
  let outbox: OutboxRepository;
  const ids = async (query: string, options: { siteId?: string } = {}) =>
    (await records.searchPatients(query, options)).map((patient) => patient.id);

  beforeEach(async () => {
    db = freshDb();
    records = new RecordsRepository(db);
    outbox = new OutboxRepository(db);
    await db.records.bulkPut([storedPatient(1), storedPatient(2)]);
    // Loaded before the writes below, so only the directory's own upkeep can make them found.
    await db.patientDirectory.whenReady();
    expect(db.patientDirectory.stats().patients).toBe(2);
  });

  it('finds a created patient right after the write commits', async () => {
    const id = await records.create(
      'patient',
      patientFields({ givenName: 'Ilse', familyName: 'Marchetti', clinicNumber: 'QX 77' }),
      ctx(),
    );
    expect(await ids('marchetti')).toEqual([id]);
    expect(await ids('qx77')).toEqual([id]);
    expect(await ids('ilse 2016-04-09')).toEqual([id]);
  });

  it('finds a renamed patient by the new name only', async () => {
    const id = storedPatient(1).id;
    await records.update('patient', id, { familyName: 'Ostrowska-Vale' }, ctx());
    expect(await ids('family1')).toEqual([]);
    expect(await ids('vale')).toEqual([id]);
    expect(await ids('ostrowska')).toEqual([id]);
    const [found] = await records.searchPatients('vale');
    expect(found?.pendingFields).toEqual(['familyName']);
  });

  it('lists a deleted patient no more, and a restored one again', async () => {
    const id = storedPatient(2).id;
    await records.remove('patient', id, ctx());
    expect(await ids('family2')).toEqual([]);
    expect(await ids('family')).toEqual([storedPatient(1).id]);
    await records.restore('patient', id, ctx());
    expect(await ids('family2')).toEqual([id]);
  });

  it('follows a patient moved to another site', async () => {
    const id = storedPatient(1).id;
    await records.update('patient', id, { siteId: OTHER_SITE_ID }, ctx());
    expect(await ids('family', { siteId: OTHER_SITE_ID })).toEqual([id]);
    expect(await ids('family', { siteId: SITE_ID })).toEqual([storedPatient(2).id]);
  });

  it('follows an Outbox discard and its undo', async () => {
    const id = await records.create('patient', patientFields({ familyName: 'Lindqvist' }), ctx());
    const [entry] = await outbox.listEntries();
    await db.outbox.update(entry!.changeId, { state: 'rejected', error: 'Site not allowed' });
    const receipt = await outbox.discard(entry!.changeId);
    expect(await ids('lindqvist')).toEqual([]);
    await outbox.undoDiscard(receipt);
    expect(await ids('lindqvist')).toEqual([id]);
  });

  it('follows a rejected edit fixed and sent again', async () => {
    const id = storedPatient(1).id;
    await records.update('patient', id, { clinicNumber: 'FL-DUP' }, ctx());
    const [entry] = await outbox.listEntries();
    await db.outbox.update(entry!.changeId, { state: 'rejected', error: 'Clinic number taken' });
    await outbox.resubmit(entry!.changeId, { clinicNumber: 'FL-800' }, ctx());
    expect(await ids('fl-dup')).toEqual([]);
    expect(await ids('fl-800')).toEqual([id]);
  });

  it('holds the record as stored after a push is acknowledged', async () => {
    const id = await records.create('patient', patientFields({ familyName: 'Achterberg' }), ctx());
    const sent = await outbox.listEntries();
    await applyPushResults(
      db,
      sent,
      [{ changeId: sent[0]!.changeId, status: 'applied', version: 41, conflicts: [] }],
      now,
    );
    const [found] = await records.searchPatients('achterberg');
    expect(found?.id).toBe(id);
    expect(found?.version).toBe(41);
    expect(found?.pendingFields).toEqual([]);
    expect(found).toEqual(await records.get('patient', id));
  });

  it('follows every page a sync stores: new, renamed and deleted patients', async () => {
    const pulled = (record: StoredRecord, version: number, deleted = false): PulledRecord => ({
      collection: 'patient',
      id: record.id,
      version,
      deleted,
      fields: record.fields as PulledRecord['fields'],
      stamps: {
        familyName: {
          hlc: `${String(now + version).padStart(15, '0')}-00000-${DEVICE_ID}`,
          version,
          by: CLINICIAN_ID,
          device: DEVICE_ID,
        },
      },
      conflicts: [],
    });
    const renamed = storedPatient(1, { familyName: 'Haverkamp' });
    const pages = [
      { records: [pulled(storedPatient(3), 10), pulled(renamed, 11)], cursor: 11, more: true },
      { records: [pulled(storedPatient(2), 12, true)], cursor: 12, more: false },
    ];
    let served = 0;
    const engine = new SyncEngine({
      db,
      baseUrl: 'http://clinic.invalid',
      auth: { tokenFor: async () => 'token', onUnauthorized: async () => undefined },
      deviceId: DEVICE_ID,
      pullAs: () => CLINICIAN_ID,
      fetch: async () => new Response(JSON.stringify(pages[served++]), { status: 200 }),
      timers: { setTimeout: () => null, clearTimeout: () => undefined },
      network: { isOnline: () => true, subscribe: () => () => undefined },
      chunkSize: 1,
      yieldToUi: () => Promise.resolve(),
    });
    expect(await engine.syncOnce()).toMatchObject({ kind: 'synced', pulled: 3 });
    expect(await ids('family3')).toEqual([storedPatient(3).id]);
    expect(await ids('haverkamp')).toEqual([renamed.id]);
    expect(await ids('family1')).toEqual([]);
    expect(await ids('family2')).toEqual([]);
    expect(db.patientDirectory.stats().patients).toBe(2);
  });

  it('changes nothing for a transaction that is rolled back', async () => {
    await expect(
      db.transaction('rw', db.records, async () => {
        await db.records.put(storedPatient(9, { familyName: 'Nevermore' }));
        await db.records.delete(['patient', storedPatient(1).id] as unknown as string);
        throw new Error('the second write failed');
      }),
    ).rejects.toThrow('the second write failed');
    expect(await ids('nevermore')).toEqual([]);
    // A later write waits for the rolled-back transaction to end, so by now it has ended.
    const later = await records.create('patient', patientFields({ familyName: 'Ferrand' }), ctx());
    expect(await ids('ferrand')).toEqual([later]);
    expect(await ids('nevermore')).toEqual([]);
    expect(await ids('family1')).toEqual([storedPatient(1).id]);
  });

  it('follows writes straight to the table: a put, a delete and a clear', async () => {
    await db.records.put(storedPatient(5, { familyName: 'Okwuosa' }));
    expect(await ids('okwuosa')).toEqual([storedPatient(5).id]);
    await db.records.delete(['patient', storedPatient(5).id] as unknown as string);
    expect(await ids('okwuosa')).toEqual([]);
    await db.records.clear();
    expect(await ids('family')).toEqual([]);
  });

  it('applies a large batch in one transaction: many patients renamed, added and removed', async () => {
    const batch = Array.from({ length: 40 }, (_, i) =>
      storedPatient(100 + i, { familyName: `Batchelor${i}` }),
    );
    await db.records.bulkPut(batch);
    expect(await ids('batchelor')).toHaveLength(40);
    await db.transaction('rw', db.records, async () => {
      await db.records.bulkPut(
        batch.slice(0, 30).map((record, i) => ({
          ...record,
          fields: { ...record.fields, familyName: `Renfrew${i}` },
        })),
      );
      await db.records.bulkDelete(
        batch.slice(30).map((record) => ['patient', record.id] as unknown as string),
      );
    });
    expect(await ids('batchelor')).toEqual([]);
    expect(await ids('renfrew')).toHaveLength(30);
    expect(await ids('renfrew7')).toEqual([batch[7]!.id]);
    expect(await ids('given1')).toHaveLength(31);
    expect(db.patientDirectory.stats()).toMatchObject({ patients: 32, terms: 32 * 4 });
  });

  it('sees a write made through another connection to the same database', async () => {
    const other = new FuselightDb(db.name);
    await other.records.put(storedPatient(2, { familyName: 'Bergkamp' }));
    other.close();
    expect(await ids('bergkamp')).toEqual([storedPatient(2).id]);
    expect(await ids('family2')).toEqual([]);
  });
});

describe('one patient directory per database', () => {
  it('keeps each database’s patients to its own searches', async () => {
    const first = freshDb();
    const second = freshDb();
    const inFirst = new RecordsRepository(first);
    const inSecond = new RecordsRepository(second);
    await Promise.all([first.patientDirectory.whenReady(), second.patientDirectory.whenReady()]);
    const a = await inFirst.create('patient', patientFields({ familyName: 'Abernethy' }), ctx());
    const b = await inSecond.create('patient', patientFields({ familyName: 'Abernathy' }), ctx());
    expect((await inFirst.searchPatients('abern')).map((p) => p.id)).toEqual([a]);
    expect((await inSecond.searchPatients('abern')).map((p) => p.id)).toEqual([b]);
  });

  it('drops what it holds when its database closes, and loads again when searched', async () => {
    const db = freshDb();
    const records = new RecordsRepository(db);
    const id = await records.create('patient', patientFields(), ctx());
    expect((await records.searchPatients('okafor')).map((p) => p.id)).toEqual([id]);
    db.close({ disableAutoOpen: false });
    expect(db.patientDirectory.isReady).toBe(false);
    expect(db.patientDirectory.stats().patients).toBe(0);
    expect((await records.searchPatients('amara')).map((p) => p.id)).toEqual([id]);
  });
});
