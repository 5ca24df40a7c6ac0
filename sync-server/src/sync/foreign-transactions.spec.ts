// Pulls depend only on the server's own writes (records/record-version.ts): while other people's
// transactions stay open on the cluster — of any isolation level, in this database or another
// one, as an analyst's `psql` session or a `pg_dump` backup leaves them — a pushed change is in
// the very next pull of another tablet. Under the earlier transaction-id watermark such a
// transaction held every pull back until it ended.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { isPullReset } from '@fuselight/shared';
import { adminUrl } from '../testing/global-setup';
import {
  openForeignTransaction,
  otherDatabase,
  type IsolationLevel,
} from '../testing/foreign-transactions';
import type { TestApp } from '../testing/test-app';
import {
  SITE_A,
  createSyncTestApp,
  newId,
  patientFields,
  tabletFor,
} from './testing/sync-test-kit';

let t: TestApp;
beforeAll(async () => {
  t = await createSyncTestApp();
});
afterAll(async () => {
  await t.close();
});

describe('other transactions on the cluster', () => {
  it.each<[IsolationLevel, 'this database' | 'another database']>([
    ['read committed', 'this database'],
    ['repeatable read', 'this database'],
    ['serializable', 'this database'],
    ['read committed', 'another database'],
    ['repeatable read', 'another database'],
    ['serializable', 'another database'],
  ])('a %s transaction open in %s holds no pull back', async (isolation, where) => {
    const writer = await tabletFor(t, 'orthoptist', [SITE_A]);
    const reader = await tabletFor(t, 'orthoptist', [SITE_A]);
    const start = await reader.pullOk(0, 500);
    if (isPullReset(start)) throw new Error('unexpected reset');
    let cursor = start.cursor;
    for (let page = start; page.more;) {
      const next = await reader.pullOk(cursor, 500);
      if (isPullReset(next)) throw new Error('unexpected reset');
      cursor = next.cursor;
      page = next;
    }

    const url = where === 'this database' ? t.db.url : otherDatabase(adminUrl(), 'postgres');
    const foreign = await openForeignTransaction(url, isolation);
    try {
      const recordId = newId();
      await writer.pushOk([writer.change({ recordId, fields: patientFields(SITE_A) })]);
      // The very next pull brings it: no waiting for the open transaction.
      const page = await reader.pullOk(cursor, 500);
      if (isPullReset(page)) throw new Error('unexpected reset');
      expect(page.records.map((r) => r.id)).toEqual([recordId]);
      expect(page.more).toBe(false);
      expect(page.cursor).toBe(page.records[0]?.version);
    } finally {
      await foreign.end();
    }
  });
});
