import { afterEach, describe, expect, it } from 'vitest';
import { FuselightDb } from '../db';
import { OutboxRepository } from '../outbox-repository';
import { sectionRecordId } from '../record-ids';
import { RecordsRepository, type EditContext } from '../records-repository';
import { CLINICIAN_ID, DEVICE_ID, patientFields, visitFields } from '../test-fixtures';
import { ChartingRepository } from './charting-repository';

const opened: FuselightDb[] = [];
let now = 1_764_576_000_000;
const ctx = (deviceId = DEVICE_ID): EditContext => {
  now += 1000;
  return { authorId: CLINICIAN_ID, deviceId, nowMs: now };
};

function tablet() {
  const db = new FuselightDb(`test-${crypto.randomUUID()}`);
  opened.push(db);
  const records = new RecordsRepository(db);
  return {
    db,
    records,
    outbox: new OutboxRepository(db),
    charting: new ChartingRepository(records),
  };
}

afterEach(async () => {
  for (const db of opened.splice(0)) {
    db.close();
    await db.delete();
  }
});

describe('Sections of a visit', () => {
  it('are one record with the same id on two tablets that start the same Section offline', async () => {
    const a = tablet();
    const b = tablet();
    const patientId = await a.records.create('patient', patientFields(), ctx());
    const visitId = await a.records.create('visit', visitFields(patientId), ctx());
    // Tablet B holds the same patient and visit, as after a pull.
    await b.db.records.bulkPut(await a.db.records.toArray());

    const idA = await a.charting.saveSection(
      visitId,
      'coverTest',
      { nearFinding: 'phoria' },
      ctx(),
    );
    const idB = await b.charting.saveSection(
      visitId,
      'nearPointConvergence',
      { breakCm: 8 },
      ctx('tablet-b'),
    );
    const idB2 = await b.charting.saveSection(
      visitId,
      'coverTest',
      { distanceFinding: 'tropia' },
      ctx('tablet-b'),
    );

    expect(idA).toBe(sectionRecordId(visitId, 'coverTest'));
    expect(idB2).toBe(idA);
    expect(idB).toBe(sectionRecordId(visitId, 'nearPointConvergence'));
    const entriesA = (await a.outbox.listEntries()).filter((e) => e.collection === 'coverTest');
    const entriesB = (await b.outbox.listEntries()).filter((e) => e.collection === 'coverTest');
    expect(entriesA.map((e) => e.recordId)).toEqual([idA]);
    expect(entriesB.map((e) => e.recordId)).toEqual([idA]);
    expect(entriesA[0]?.fields).toMatchObject({ nearFinding: 'phoria' });
    expect(entriesB[0]?.fields).toMatchObject({ distanceFinding: 'tropia' });
  });

  it('reuse a Section record that was made before ids were shared', async () => {
    const a = tablet();
    const patientId = await a.records.create('patient', patientFields(), ctx());
    const visitId = await a.records.create('visit', visitFields(patientId), ctx());
    const visit = await a.records.get('visit', visitId);
    const olderId = await a.records.create(
      'coverTest',
      { siteId: visit!.fields.siteId, visitId, patientId, nearFinding: 'phoria' } as never,
      ctx(),
    );
    const id = await a.charting.saveSection(
      visitId,
      'coverTest',
      { distanceFinding: 'tropia' },
      ctx(),
    );
    expect(id).toBe(olderId);
    expect((await a.records.listByField('coverTest', 'visitId', visitId)).length).toBe(1);
  });
});
