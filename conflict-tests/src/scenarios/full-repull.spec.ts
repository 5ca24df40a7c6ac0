// Tablets in the field with a cursor handed out while pull pages were ordered as text: the
// server tells them once to pull from the start; they keep every Outbox entry and local edit,
// end up holding exactly the server's records, and say so in their sync status. Versions here
// cross a change in digit count, where text order skipped records.
import type { TestUser } from '@server/testing/identity-factory';
import { startVersionsBelowPowerOfTen, versionLengths } from '@server/testing/version-boundary';
import type { FullRepull } from '@pwa/sync/full-repull';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startClinic, type Clinic } from '../harness/clinic-server';
import { databaseSnapshot, setCursorEpoch } from '../harness/server-records';
import { SimTablet } from '../harness/sim-tablet';

let clinic: Clinic;
let nurse: TestUser;
const tablets: SimTablet[] = [];

beforeAll(async () => {
  clinic = await startClinic();
  nurse = await clinic.person('orthoptist');
});

afterAll(async () => {
  for (const tablet of tablets) await tablet.close();
  await clinic?.close();
});

async function tablet(name: string, options: { pageLimit?: number } = {}) {
  const created = await SimTablet.create(clinic, name, [nurse], options);
  tablets.push(created);
  return created;
}

const patient = (n: number) => ({
  siteId: clinic.siteId,
  givenName: `Child ${n}`,
  familyName: 'Okafor',
  dateOfBirth: '2016-04-09',
  clinicNumber: `FL-${n}`,
});

describe('a tablet whose cursor came from text-ordered pages', () => {
  it('pulls everything again once, keeps its Outbox and edits, holds exactly the server’s records, and shows the re-sync', async () => {
    const writer = await tablet('writer');
    let n = 0;
    for (let i = 0; i < 12; i += 1) await writer.create('patient', patient((n += 1)));
    expect((await writer.sync()).kind).toBe('synced');
    await startVersionsBelowPowerOfTen(clinic.t.db.url, { transactionsBefore: 3 });
    for (let round = 0; round < 8; round += 1) {
      for (let i = 0; i < 3; i += 1) await writer.create('patient', patient((n += 1)));
      expect((await writer.sync()).kind).toBe('synced');
    }
    const server = await databaseSnapshot(clinic);
    expect(versionLengths(Object.values(server).map((r) => r.version)).length).toBe(2);

    // The field tablet synced before; as if its text-ordered pages had skipped some records.
    const field = await tablet('field', { pageLimit: 7 });
    expect((await field.sync()).kind).toBe('synced');
    const skipped = Object.keys(server).slice(3, 9);
    await field.db.records.bulkDelete(skipped.map((key) => key.split('/') as unknown as string));
    expect(Object.keys(await field.snapshot())).toHaveLength(Object.keys(server).length - 6);
    await setCursorEpoch(clinic, field.device.deviceId, 1);

    // Local work waiting: an edit to send, and an entry the server refused (clock a day ahead).
    const [firstKey] = Object.keys(server);
    const editedId = firstKey!.split('/')[1]!;
    await field.update('patient', editedId, { givenName: 'Edited on the field tablet' });
    field.skewMs = 26 * 3600_000;
    const refusedId = await field.create('patient', patient(999));

    // The next sync sends them, is told to start over, and says so while it runs and once done.
    const seen: Array<FullRepull | null> = [];
    const stop = field.engine.status.subscribe(() =>
      seen.push(field.engine.status.getSnapshot().fullRepull),
    );
    expect((await field.sync()).kind).toBe('synced');
    stop();
    field.skewMs = 0;
    const refused = (await field.entries()).filter((e) => e.state === 'rejected');
    expect(refused.map((e) => e.recordId)).toEqual([refusedId]);
    expect(seen.some((s) => s?.finishedAt === null)).toBe(true);
    const afterFirst = field.engine.status.getSnapshot().fullRepull;
    expect(afterFirst).toMatchObject({ reason: 'cursor-epoch' });
    expect(afterFirst?.finishedAt).not.toBeNull();

    const now = await databaseSnapshot(clinic);
    const mine = await field.snapshot();
    expect(Object.keys(mine).sort()).toEqual([...Object.keys(now), `patient/${refusedId}`].sort());
    for (const [key, record] of Object.entries(now)) expect(mine[key], key).toEqual(record);
    expect(mine[`patient/${editedId}`]?.fields.givenName).toBe('Edited on the field tablet');
    // The refused entry and its local record are still there for their author.
    expect((await field.entries()).map((e) => e.recordId)).toContain(refusedId);
    expect(afterFirst?.received).toBe(Object.keys(now).length);

    // Once done, it is not asked again.
    const again = await field.sync();
    expect(again.kind).toBe('synced');
    expect(field.engine.status.getSnapshot().fullRepull).toEqual(afterFirst);
  });

  it('shows the re-sync as under way while it runs, and after a reload, until it ends', async () => {
    const writer = await tablet('writer-2');
    for (let i = 0; i < 20; i += 1) await writer.create('patient', patient(2000 + i));
    expect((await writer.sync()).kind).toBe('synced');

    const field = await tablet('field-2', { pageLimit: 5 });
    expect((await field.sync()).kind).toBe('synced');
    await setCursorEpoch(clinic, field.device.deviceId, 1);

    // The network drops after three pages of the re-pull (the first pull answers the reset).
    const states: Array<FullRepull | null> = [];
    const stop = field.engine.status.subscribe(() =>
      states.push(field.engine.status.getSnapshot().fullRepull),
    );
    let pulls = 0;
    field.network.setChooser((method, path) =>
      path === '/api/sync/pull' && (pulls += 1) > 4 ? { kind: 'drop' } : { kind: 'deliver' },
    );
    expect((await field.sync()).kind).not.toBe('synced');
    stop();
    expect(states.some((s) => s !== null && s.finishedAt === null && s.received > 0)).toBe(true);
    const cut = field.engine.status.getSnapshot().fullRepull;
    expect(cut).toMatchObject({ reason: 'cursor-epoch', finishedAt: null });

    // A new engine on the same database (the app reloaded) still shows it under way.
    const reloaded = await field.reload();
    expect(reloaded.engine.status.getSnapshot().fullRepull).toEqual(cut);
    expect((await reloaded.sync()).kind).toBe('synced');
    const done = reloaded.engine.status.getSnapshot().fullRepull;
    expect(done?.finishedAt).not.toBeNull();
    expect(done?.startedAt).toBe(cut?.startedAt);
    const server = await databaseSnapshot(clinic);
    expect(await reloaded.snapshot()).toEqual(server);
  });
});
