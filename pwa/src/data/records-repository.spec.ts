import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { FuselightDb } from './db';
import { subscribeDataChanges, type DataChange } from './data-events';
import { peekDeviceClock } from './device-clock';
import { OutboxRepository } from './outbox-repository';
import {
  RecordNotFoundError,
  RecordValidationError,
  RecordsRepository,
  type EditContext,
} from './records-repository';
import {
  CLINICIAN_ID,
  DEVICE_ID,
  OTHER_CLINICIAN_ID,
  OTHER_SITE_ID,
  patientFields,
  planFields,
  visitFields,
} from './test-fixtures';

let db: FuselightDb;
let records: RecordsRepository;
let outbox: OutboxRepository;
let now = 1_764_576_000_000;

function ctx(authorId = CLINICIAN_ID): EditContext {
  now += 1000;
  return { authorId, deviceId: DEVICE_ID, nowMs: now };
}

beforeEach(() => {
  db = new FuselightDb(`test-${crypto.randomUUID()}`);
  records = new RecordsRepository(db);
  outbox = new OutboxRepository(db);
});

afterEach(async () => {
  db.close();
  await db.delete();
});

describe('the records repository', () => {
  it('creates a record with a UUID v7 id and its outbox entry, with every field pending', async () => {
    const id = await records.create('patient', patientFields(), ctx());
    expect(id).toMatch(/^[0-9a-f]{8}-[0-9a-f]{4}-7[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}$/);
    const record = await records.get('patient', id);
    expect(record?.fields.familyName).toBe('Okafor');
    expect(record?.version).toBe(0);
    expect(record?.pendingFields.sort()).toEqual(
      ['clinicNumber', 'dateOfBirth', 'familyName', 'givenName', 'siteId'].sort(),
    );
    const entries = await outbox.listEntries();
    expect(entries).toHaveLength(1);
    expect(entries[0]).toMatchObject({
      collection: 'patient',
      recordId: id,
      baseVersion: 0,
      authorId: CLINICIAN_ID,
      deviceId: DEVICE_ID,
      state: 'pending',
      attempts: 0,
    });
    expect(entries[0]?.deleted).toBeUndefined();
    expect(entries[0]?.hlc).toMatch(new RegExp(`^\\d{15}-\\d{5}-${DEVICE_ID}$`));
  });

  it('refuses an invalid record with an error that names the field, and writes nothing', async () => {
    const error = await records
      .create('patient', patientFields({ dateOfBirth: '2016-02-30' }), ctx())
      .catch((caught: unknown) => caught);
    expect(error).toBeInstanceOf(RecordValidationError);
    expect((error as RecordValidationError).field).toBe('dateOfBirth');
    expect((error as Error).message).toContain('dateOfBirth');
    expect(await db.records.count()).toBe(0);
    expect(await db.outbox.count()).toBe(0);
  });

  it('names a missing required field and an unknown field', async () => {
    const missing = patientFields();
    delete (missing as Record<string, unknown>).familyName;
    await expect(records.create('patient', missing as never, ctx())).rejects.toThrow(/familyName/);
    const id = await records.create('patient', patientFields(), ctx());
    await expect(records.update('patient', id, { shoeSize: 9 } as never, ctx())).rejects.toThrow(
      /unknown field shoeSize/,
    );
    await expect(
      records.update('patient', id, { familyName: null } as never, ctx()),
    ).rejects.toThrow(/familyName: Family name is required/);
  });

  it('refuses to edit a record the tablet does not hold', async () => {
    await expect(
      records.update('patient', crypto.randomUUID(), { givenName: 'X' }, ctx()),
    ).rejects.toBeInstanceOf(RecordNotFoundError);
  });

  it('coalesces consecutive edits of an unsent record into one entry without losing a field', async () => {
    const id = await records.create('patient', patientFields(), ctx());
    await records.update('patient', id, { givenName: 'Ada' }, ctx());
    await records.update('patient', id, { notes: 'Prefers the left chair' }, ctx());
    await records.update('patient', id, { givenName: 'Adaeze' }, ctx());
    const entries = await outbox.listEntries();
    expect(entries).toHaveLength(1);
    expect(entries[0]?.fields).toMatchObject({
      familyName: 'Okafor',
      givenName: 'Adaeze',
      notes: 'Prefers the left chair',
      clinicNumber: 'FL-000123',
    });
    const clock = await peekDeviceClock(db);
    expect(entries[0]?.hlc).toBe(
      `${String(clock?.wallMs).padStart(15, '0')}-${String(clock?.counter).padStart(5, '0')}-${DEVICE_ID}`,
    );
  });

  it('never coalesces into an entry already sent, nor across authors', async () => {
    const id = await records.create('patient', patientFields(), ctx());
    const [first] = await outbox.listEntries();
    await db.outbox.update(first!.changeId, { attempts: 1 });
    await records.update('patient', id, { givenName: 'Ada' }, ctx());
    await records.update('patient', id, { notes: 'n' }, ctx(OTHER_CLINICIAN_ID));
    const entries = await outbox.listEntries();
    expect(entries.map((entry) => [entry.authorId, Object.keys(entry.fields)])).toEqual([
      [CLINICIAN_ID, expect.arrayContaining(['familyName', 'givenName'])],
      [CLINICIAN_ID, ['givenName']],
      [OTHER_CLINICIAN_ID, ['notes']],
    ]);
    expect(entries[0]?.fields.givenName).toBe('Amara');
    expect(entries.map((entry) => entry.seq)).toEqual([1, 2, 3]);
  });

  it('ticks the device clock on every edit so stamps strictly increase, even with a clock going back', async () => {
    const id = await records.create('patient', patientFields(), ctx());
    const stamps: string[] = [(await outbox.listEntries())[0]!.hlc];
    const [first] = await outbox.listEntries();
    await db.outbox.update(first!.changeId, { attempts: 1 });
    for (const givenName of ['B', 'C', 'D']) {
      await records.update(
        'patient',
        id,
        { givenName },
        { authorId: CLINICIAN_ID, deviceId: DEVICE_ID, nowMs: 5 },
      );
      const entries = await outbox.listEntries();
      stamps.push(entries.at(-1)!.hlc);
    }
    expect([...stamps].sort()).toEqual(stamps);
    expect(new Set(stamps).size).toBe(4);
  });

  it('does not queue an edit that changes nothing', async () => {
    const id = await records.create('patient', patientFields(), ctx());
    const [first] = await outbox.listEntries();
    await db.outbox.update(first!.changeId, { attempts: 1 });
    await records.update('patient', id, { givenName: 'Amara' }, ctx());
    expect(await db.outbox.count()).toBe(1);
  });

  it('deletes with a tombstone that is queued like an edit', async () => {
    const id = await records.create('patient', patientFields(), ctx());
    await records.remove('patient', id, ctx());
    const record = await records.get('patient', id);
    expect(record?.deleted).toBe(true);
    expect(record?.pendingFields).toContain('deleted');
    expect((await outbox.listEntries())[0]?.deleted).toBe(true);
    expect(await records.list('patient')).toEqual([]);
    expect(await records.list('patient', { includeDeleted: true })).toHaveLength(1);
    expect(await records.searchPatients('okafor')).toEqual([]);
  });

  it('finds the sections of a visit and the visits of a patient through their indexes', async () => {
    const patientId = await records.create('patient', patientFields(), ctx());
    const visitA = await records.create('visit', visitFields(patientId), ctx());
    const visitB = await records.create(
      'visit',
      visitFields(patientId, { date: '2026-11-01' }),
      ctx(),
    );
    const planA = await records.create(
      'plan',
      planFields(patientId, visitA, { impression: 'A' }),
      ctx(),
    );
    await records.create('plan', planFields(patientId, visitB, { impression: 'B' }), ctx());
    expect((await records.listByField('plan', 'visitId', visitA)).map((r) => r.id)).toEqual([
      planA,
    ]);
    expect(
      (await records.listByField('visit', 'patientId', patientId)).map((r) => r.id).sort(),
    ).toEqual([visitA, visitB].sort());
    expect(await records.listByField('plan', 'visitId', crypto.randomUUID())).toEqual([]);
  });

  it('searches patients by name prefix, clinic number and date of birth, following edits', async () => {
    const okafor = await records.create('patient', patientFields(), ctx());
    await records.create(
      'patient',
      patientFields({
        givenName: 'Zoë',
        familyName: "O'Brien-Lowe",
        clinicNumber: 'FL-9',
        dateOfBirth: '2012-01-30',
      }),
      ctx(),
    );
    const ids = async (query: string) =>
      (await records.searchPatients(query)).map((p) => p.fields.familyName);
    expect(await ids('oka')).toEqual(['Okafor']);
    expect(await ids('ZOE')).toEqual(["O'Brien-Lowe"]);
    expect(await ids('lowe')).toEqual(["O'Brien-Lowe"]);
    expect(await ids('fl-000123')).toEqual(['Okafor']);
    expect(await ids('2012-01')).toEqual(["O'Brien-Lowe"]);
    expect(await ids('amara 2016')).toEqual(['Okafor']);
    expect(await ids('amara 2012')).toEqual([]);
    await records.update('patient', okafor, { familyName: 'Eze' }, ctx());
    expect(await ids('oka')).toEqual([]);
    expect(await ids('eze')).toEqual(['Eze']);
  });

  it('finds a date of birth typed whole, in part, unpadded or day first, as one term', async () => {
    await records.create('patient', patientFields(), ctx());
    await records.create(
      'patient',
      patientFields({ givenName: 'Tomas', familyName: 'Ilves', dateOfBirth: '2016-11-04' }),
      ctx(),
    );
    await records.create(
      'patient',
      patientFields({ givenName: 'Ines', familyName: 'Varga', dateOfBirth: '2016-04-19' }),
      ctx(),
    );
    const ids = async (query: string) =>
      (await records.searchPatients(query)).map((p) => p.fields.familyName).sort();
    expect(await ids('2016-04-09')).toEqual(['Okafor']);
    expect(await ids('2016-4-9')).toEqual(['Okafor']);
    expect(await ids('9/4/2016')).toEqual(['Okafor']);
    expect(await ids('09.04.2016')).toEqual(['Okafor']);
    expect(await ids('2016-04')).toEqual(['Okafor', 'Varga']);
    expect(await ids('2016-4')).toEqual(['Okafor', 'Varga']);
    expect(await ids('2016-04-1')).toEqual(['Varga']);
    expect(await ids('2016')).toEqual(['Ilves', 'Okafor', 'Varga']);
    expect(await ids('amara 9/4/2016')).toEqual(['Okafor']);
    expect(await ids('ines 2016-04-09')).toEqual([]);
    expect(await ids('2016-13-40')).toEqual([]);
  });

  it('lists a patient once when several of their terms match, keeps the limit and the site', async () => {
    await records.create(
      'patient',
      patientFields({ givenName: 'Ada', familyName: 'Adams-Adair' }),
      ctx(),
    );
    for (let i = 0; i < 4; i += 1) {
      await records.create(
        'patient',
        patientFields({ givenName: `Adele${i}`, familyName: 'Quarry', clinicNumber: `FL-7${i}` }),
        ctx(),
      );
    }
    await records.create(
      'patient',
      patientFields({ siteId: OTHER_SITE_ID, givenName: 'Adrian', familyName: 'Yeo' }),
      ctx(),
    );
    const found = await records.searchPatients('ada');
    expect(found.map((p) => p.fields.givenName)).toEqual(['Ada']);
    expect(await records.searchPatients('ad', { limit: 3 })).toHaveLength(3);
    const all = (await records.searchPatients('ad')).map((p) => p.fields.givenName);
    expect(all).toHaveLength(6);
    expect(new Set(all).size).toBe(6);
    expect(
      (await records.searchPatients('ad', { siteId: OTHER_SITE_ID })).map(
        (p) => p.fields.givenName,
      ),
    ).toEqual(['Adrian']);
  });

  it('searches 20,000 patients quickly', async () => {
    const rows = Array.from({ length: 20_000 }, (_, i) => ({
      collection: 'patient' as const,
      id: `0190c6a0-0000-7000-8000-${String(i).padStart(12, '0')}`,
      version: i + 1,
      deleted: false,
      fields: patientFields({ familyName: `Family${i}`, clinicNumber: `C${i}` }),
      conflicts: [],
      pendingFields: [],
      serverFields: {},
      updatedAt: 0,
    }));
    await db.records.bulkPut(rows);
    // The directory is built once, in the background after the first screen; the keystroke's
    // search is what is timed here.
    await db.patientDirectory.whenReady();
    const started = performance.now();
    const found = await records.searchPatients('family1234');
    const elapsed = performance.now() - started;
    expect(found.map((p) => p.fields.familyName).sort()).toEqual([
      'Family1234',
      'Family12340',
      'Family12341',
      'Family12342',
      'Family12343',
      'Family12344',
      'Family12345',
      'Family12346',
      'Family12347',
      'Family12348',
      'Family12349',
    ]);
    expect(elapsed).toBeLessThan(500);
  });

  it('announces each committed write so queries refresh', async () => {
    const changes: DataChange[] = [];
    const unsubscribe = subscribeDataChanges((change) => changes.push(change));
    const id = await records.create('patient', patientFields(), ctx());
    await records
      .create('patient', patientFields({ familyName: '' }), ctx())
      .catch(() => undefined);
    unsubscribe();
    expect(changes).toEqual([{ collections: ['patient'], recordIds: [id], outbox: true }]);
  });
});

describe('the outbox repository', () => {
  it('counts pending and rejected entries', async () => {
    await records.create('patient', patientFields(), ctx());
    const id = await records.create('patient', patientFields({ familyName: 'Eze' }), ctx());
    const entry = (await outbox.listEntries()).find((e) => e.recordId === id)!;
    await db.outbox.update(entry.changeId, {
      state: 'rejected',
      error: 'Not allowed at this site',
    });
    expect(await outbox.counts()).toEqual({ total: 2, pending: 1, rejected: 1 });
  });

  it('discards a rejected edit, restores what the server holds, and undoes the discard', async () => {
    const id = await records.create('patient', patientFields(), ctx());
    // As if the server had acknowledged the creation at version 7.
    const [created] = await outbox.listEntries();
    await db.outbox.delete(created!.changeId);
    await db.records.update(['patient', id] as unknown as string, {
      version: 7,
      pendingFields: [],
      serverFields: {},
    });
    await records.update('patient', id, { givenName: 'Wrong', notes: 'x' }, ctx());
    const [edit] = await outbox.listEntries();
    await expect(outbox.discard(edit!.changeId)).rejects.toThrow(/still waiting to be sent/);
    await db.outbox.update(edit!.changeId, { state: 'rejected', error: 'Not allowed' });

    const receipt = await outbox.discard(edit!.changeId);
    let record = await records.get('patient', id);
    expect(record?.fields.givenName).toBe('Amara');
    expect(record?.fields.notes).toBeUndefined();
    expect(record?.pendingFields).toEqual([]);
    expect(await db.outbox.count()).toBe(0);

    await outbox.undoDiscard(receipt);
    record = await records.get('patient', id);
    expect(record?.fields.givenName).toBe('Wrong');
    expect(record?.pendingFields.sort()).toEqual(['givenName', 'notes']);
    expect((await outbox.listEntries()).map((e) => e.changeId)).toEqual([edit!.changeId]);
  });

  it('discarding the rejected creation of a record that never reached the server removes it', async () => {
    const id = await records.create('patient', patientFields(), ctx());
    const [entry] = await outbox.listEntries();
    await db.outbox.update(entry!.changeId, { state: 'rejected', error: 'Site not allowed' });
    await outbox.discard(entry!.changeId);
    expect(await records.get('patient', id)).toBeUndefined();
    expect(await records.searchPatients('okafor')).toEqual([]);
  });

  it('fixes a rejected edit as a new change, refusing a correction that is still invalid', async () => {
    const id = await records.create('patient', patientFields(), ctx());
    const [entry] = await outbox.listEntries();
    await db.outbox.update(entry!.changeId, { state: 'rejected', error: 'Clinic number taken' });
    await expect(outbox.resubmit(entry!.changeId, { clinicNumber: '' }, ctx())).rejects.toThrow(
      /clinicNumber/,
    );
    const newId = await outbox.resubmit(entry!.changeId, { clinicNumber: 'FL-777' }, ctx());
    const entries = await outbox.listEntries();
    expect(entries).toHaveLength(1);
    expect(entries[0]).toMatchObject({
      changeId: newId,
      state: 'pending',
      error: null,
      attempts: 0,
    });
    expect(entries[0]?.fields.clinicNumber).toBe('FL-777');
    expect(entries[0]?.fields.familyName).toBe('Okafor');
    expect(newId).not.toBe(entry!.changeId);
    expect((await records.get('patient', id))?.fields.clinicNumber).toBe('FL-777');
  });
});
