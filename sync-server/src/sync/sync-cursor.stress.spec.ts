// Guarantee 4 under load: four tablets push concurrently while a puller walks its cursor, and a
// slow writer keeps committing changes numbered below versions the pushers have already committed
// (an out-of-order commit). The puller must end up with every record, never going backwards. Versions start just
// below a power of ten, so the run crosses a change in their digit count. The run is repeated
// with other people's transactions on the cluster: an analyst's session left open in a
// transaction, and `pg_dump` backups one after another (testing/foreign-transactions.ts).
import pg from 'pg';
import { BEGIN_VERSIONED_WRITE_SQL } from '../records/record-version';
import { adminUrl } from '../testing/global-setup';
import {
  dumpContinuously,
  openForeignTransaction,
  otherDatabase,
} from '../testing/foreign-transactions';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { isPullReset } from '@fuselight/shared';
import type { TestApp } from '../testing/test-app';
import { startVersionsBelowPowerOfTen, versionLengths } from '../testing/version-boundary';
import {
  SITE_A,
  createSyncTestApp,
  newId,
  patientFields,
  tabletFor,
  type Tablet,
} from './testing/sync-test-kit';

let t: TestApp;
beforeAll(async () => {
  t = await createSyncTestApp();
});
afterAll(async () => {
  await t.close();
});

const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

type Foreign = 'none' | 'open transactions' | 'pg_dump';

describe('pull cursors under concurrent pushes', () => {
  it.each<[Foreign, number]>([
    ['none', 12],
    ['open transactions', 6],
    ['pg_dump', 6],
  ])(
    'never skips a change behind its cursor (other transactions on the cluster: %s)',
    async (foreign, batches) => {
      const foreignWork =
        foreign === 'open transactions'
          ? await Promise.all([
              openForeignTransaction(otherDatabase(adminUrl(), 'postgres'), 'repeatable read'),
              openForeignTransaction(t.db.url, 'read committed'),
            ])
          : [];
      const dumping = foreign === 'pg_dump' ? dumpContinuously(t.db.url) : null;
      const pushers = await Promise.all(
        [1, 2, 3, 4].map(() => tabletFor(t, 'orthoptist', [SITE_A])),
      );
      const puller = await tabletFor(t, 'orthoptist', [SITE_A]);
      const expected = new Set<string>();
      let pushing = true;
      // Records from before the boundary, then versions a few pushes below it.
      const early = Array.from({ length: 30 }, () => newId());
      await pushers[0]!.pushOk(
        early.map((recordId) => pushers[0]!.change({ recordId, fields: patientFields(SITE_A) })),
      );
      early.forEach((id) => expected.add(id));
      const { boundary } = await startVersionsBelowPowerOfTen(t.db.url, { transactionsBefore: 12 });

      // Pushers keep going until the slow writer is done, so its commits always land behind theirs.
      let slowWriterDone = false;
      const pushLoop = async (tablet: Tablet) => {
        for (let batch = 0; batch < batches || !slowWriterDone; batch += 1) {
          const ids = Array.from({ length: 20 }, () => newId());
          const body = await tablet.pushOk(
            ids.map((recordId) => tablet.change({ recordId, fields: patientFields(SITE_A) })),
          );
          body.results.forEach((r, i) => r.status === 'applied' && expected.add(ids[i] as string));
        }
      };

      // A writer that takes its version first and commits later, as a slow push would: it is
      // registered (records/record-version.ts), so pulls hold back what committed after it began.
      let outOfOrder = 0;
      const slowWriter = async () => {
        const client = new pg.Client({ connectionString: t.db.url });
        await client.connect();
        try {
          for (let round = 0; round < 6; round += 1) {
            const id = newId();
            await client.query('begin');
            const { rows } = await client.query<{ base: string }>(BEGIN_VERSIONED_WRITE_SQL);
            const version = Number(rows[0]?.base) + 1;
            await client.query(
              `insert into "sync_record" ("id", "collection", "site_id", "version", "deleted", "fields", "stamps", "created_at", "updated_at")
             values ($1, 'patient', $2, $3, false, $4, '{}'::jsonb, now(), now())`,
              [id, SITE_A, version, JSON.stringify(patientFields(SITE_A))],
            );
            // Hold the transaction open until a pusher has committed a higher version (at most
            // 10 s), so this commit is out of order whatever the machine's load.
            for (let waited = 0; waited < 10_000; waited += 50) {
              const [max] = (
                await client.query<{ m: string }>(
                  `select max("version")::text as m from "sync_record"`,
                )
              ).rows;
              if (Number(max?.m) > version) {
                outOfOrder += 1;
                break;
              }
              await sleep(50);
            }
            await client.query('commit');
            expected.add(id);
          }
        } finally {
          slowWriterDone = true;
          await client.end();
        }
      };

      const received = new Set<string>();
      let cursor = 0;
      let pages = 0;
      const pullLoop = async () => {
        for (;;) {
          const done = !pushing;
          const page = await puller.pullOk(cursor, 50);
          if (isPullReset(page)) throw new Error('unexpected reset');
          pages += 1;
          for (const record of page.records) {
            expect(record.version).toBeGreaterThan(cursor);
            received.add(record.id);
          }
          expect(page.cursor).toBeGreaterThanOrEqual(cursor);
          cursor = page.cursor;
          if (done && !page.more) return;
          // A page with nothing new (caught up, or held back behind an open write): wait a little.
          if (page.records.length === 0) await sleep(5);
        }
      };

      const pulling = pullLoop();
      await Promise.all([...pushers.map(pushLoop), slowWriter()]);
      pushing = false;
      await pulling;
      const dumps = (await dumping?.stop()) ?? 0;
      await Promise.all(foreignWork.map((w) => w.end()));

      expect(outOfOrder).toBe(6);
      if (foreign === 'pg_dump') expect(dumps).toBeGreaterThan(0);
      expect(pages).toBeGreaterThan(5);
      const missing = [...expected].filter((id) => !received.has(id));
      expect(missing).toEqual([]);
      expect(expected.size).toBeGreaterThanOrEqual(4 * batches * 20 + 6 + 30);
      // The run did cross the boundary: versions of both lengths were there to be paged through.
      const versions = (
        await t
          .em()
          .getConnection()
          .execute<{ v: string }[]>(`select r."version"::text as "v" from "sync_record" r`)
      ).map((row) => Number(row.v));
      expect(versions.some((v) => v < boundary) && versions.some((v) => v >= boundary)).toBe(true);
      expect(versionLengths(versions).length).toBeGreaterThanOrEqual(2);
    },
    120_000,
  );
});
