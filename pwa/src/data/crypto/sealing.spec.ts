import { afterEach, describe, expect, it } from 'vitest';
import { FuselightDb } from '../db';
import { OutboxRepository } from '../outbox-repository';
import { RecordsRepository, type EditContext } from '../records-repository';
import { CLINICIAN_ID, DEVICE_ID, patientFields, visitFields } from '../test-fixtures';
import { DataKeyVault, TabletLockedError } from './data-key-vault';
import { newDataKey } from './key-slots';
import { flipSealedByte, rawDump } from './raw-dump.fixture';

const opened: FuselightDb[] = [];
let now = 1_764_576_000_000;
function ctx(): EditContext {
  now += 1000;
  return { authorId: CLINICIAN_ID, deviceId: DEVICE_ID, nowMs: now };
}

afterEach(async () => {
  for (const db of opened.splice(0)) {
    db.close();
    await db.delete();
  }
});

async function unlockedDb() {
  const vault = new DataKeyVault();
  vault.hold(await newDataKey());
  const db = new FuselightDb(`sealing-${crypto.randomUUID()}`, vault);
  opened.push(db);
  return { db, vault, records: new RecordsRepository(db), outbox: new OutboxRepository(db) };
}

describe('the sealing layer', () => {
  it('stores records and Outbox entries sealed, and reads and edits them as plain values', async () => {
    const { db, records, outbox } = await unlockedDb();
    const id = await records.create('patient', patientFields(), ctx());
    await records.update('patient', id, { givenName: 'Adaeze' }, ctx());
    const visitId = await records.create('visit', visitFields(id), ctx());

    expect((await records.get('patient', id))?.fields).toMatchObject({
      givenName: 'Adaeze',
      familyName: 'Okafor',
    });
    expect((await records.listByField('visit', 'patientId', id)).map((v) => v.id)).toEqual([
      visitId,
    ]);
    expect((await records.searchPatients('okafor')).map((p) => p.id)).toEqual([id]);
    // The unsent edit was coalesced into the patient's first entry, as without sealing.
    expect((await outbox.listEntries()).map((e) => e.fields.givenName ?? null)).toEqual([
      'Adaeze',
      null,
    ]);

    const { text } = await rawDump(db.name);
    for (const secret of ['Okafor', 'Adaeze', 'Amara', '2016-04-09', 'FL-000123']) {
      expect(text).not.toContain(secret);
    }
    expect(text).toContain(id);
  });

  it('refuses to read or write patient data once locked, and reads it again after unlock', async () => {
    const { db, vault, records } = await unlockedDb();
    const id = await records.create('patient', patientFields(), ctx());
    const key = vault.dataKey!;
    vault.lock();
    db.patientDirectory.reset();
    await expect(records.get('patient', id)).rejects.toBeInstanceOf(TabletLockedError);
    await expect(records.create('patient', patientFields(), ctx())).rejects.toBeInstanceOf(
      TabletLockedError,
    );
    vault.hold(key);
    expect((await records.get('patient', id))?.fields.familyName).toBe('Okafor');
  });

  it('reports a value whose ciphertext was altered in words, and loses nothing else', async () => {
    const { db, vault, records } = await unlockedDb();
    const damaged = await records.create('patient', patientFields(), ctx());
    const intact = await records.create('patient', patientFields({ familyName: 'Mensah' }), ctx());
    db.close();
    await flipSealedByte(db.name, 'records', ['patient', damaged]);
    await db.open();

    expect(await records.get('patient', damaged)).toBeUndefined();
    expect((await records.list('patient')).map((p) => p.id)).toEqual([intact]);
    expect(vault.damagedValues()).toEqual([
      expect.objectContaining({ table: 'records', key: `patient ${damaged}` }),
    ]);
    // The Outbox entries of both are whole.
    expect(await db.outbox.count()).toBe(2);
  });
});
