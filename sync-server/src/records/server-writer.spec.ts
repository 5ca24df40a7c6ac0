// The server writer numbers several writes of one transaction apart, stamps past every stamp on
// the record, answers null for a record that is not there, and refuses to write outside a
// transaction. (Joining an open dispute: letters/record-access.spec.ts; resolving one:
// disputes/dispute-routes.spec.ts.)
import type { EntityManager } from '@mikro-orm/postgresql';
import { compareStamps } from '@fuselight/shared';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { TestApp } from '../testing/test-app';
import {
  SITE_A,
  createSyncTestApp,
  newId,
  patientFields,
  tabletFor,
} from '../sync/testing/sync-test-kit';
import { RecordStore } from './record-store';
import { ServerWriter } from './server-writer';
import { SERVER_DEVICE } from './stored-record';

let t: TestApp;
beforeAll(async () => {
  t = await createSyncTestApp();
});
afterAll(async () => {
  await t.close();
});

describe('ServerWriter', () => {
  it('gives two writes in one transaction distinct versions, stamped past the record', async () => {
    const tablet = await tabletFor(t, 'orthoptist', [SITE_A]);
    const first = newId();
    const second = newId();
    await tablet.pushOk([
      tablet.change({ recordId: first, fields: patientFields(SITE_A) }),
      tablet.change({ recordId: second, fields: patientFields(SITE_A) }),
    ]);
    const writer = t.app.get(ServerWriter);
    const by = tablet.caller.person.id;
    const now = t.clock.now();
    const [a, b] = await t
      .em()
      .fork()
      .transactional(async (em) => [
        await writer.writeFields(em as EntityManager, {
          recordId: first,
          fields: { notes: 'one' },
          by,
          deviceId: null,
          now,
        }),
        await writer.writeFields(em as EntityManager, {
          recordId: second,
          fields: { notes: 'two' },
          by,
          deviceId: null,
          now,
        }),
      ]);
    expect(a && b).toBeTruthy();
    expect(b!.version).toBe(a!.version + 1);
    expect(a!.stamp).toMatchObject({ by, device: SERVER_DEVICE, version: a!.version });
    for (const stamp of Object.values(a!.before.stamps)) {
      expect(compareStamps(a!.stamp.hlc, stamp.hlc)).toBeGreaterThan(0);
    }
    const stored = await t.app.get(RecordStore).byIds(t.em() as EntityManager, [first, second]);
    expect(stored.get(first)).toMatchObject({ version: a!.version, fields: { notes: 'one' } });
    expect(stored.get(second)).toMatchObject({ version: b!.version, fields: { notes: 'two' } });
  });

  it('answers null for a record that is not there and refuses to write outside a transaction', async () => {
    const writer = t.app.get(ServerWriter);
    const write = {
      recordId: newId(),
      fields: { notes: 'x' },
      by: newId(),
      deviceId: null,
      now: t.clock.now(),
    };
    expect(
      await t
        .em()
        .fork()
        .transactional((em) => writer.writeFields(em as EntityManager, write)),
    ).toBeNull();
    await expect(writer.writeFields(t.em() as EntityManager, write)).rejects.toThrow(
      'the server writes records only inside a transaction',
    );
  });
});
