// Backups an operator can trust: `npm run backup` runs while tablets push; every change the server
// acknowledged before the backup began is in it; after `npm run restore` the server runs on the
// restored database, a tablet whose cursor is above what the backup held is told to pull from the
// start (no silent gap), a tablet behind it carries on, and every tablet then holds exactly the
// restored server's records plus its own unsent edits, which it pushes.
import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import type { TestUser } from '@server/testing/identity-factory';
import { createTestApp, createTestDatabase } from '@server/testing/test-app';
import type { FullRepull } from '@pwa/sync/full-repull';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startClinic, type Clinic } from '../harness/clinic-server';
import { expectHoldsServerRecords } from '../harness/convergence';
import { databaseSnapshot } from '../harness/server-records';
import { SimTablet } from '../harness/sim-tablet';

const repoRoot = resolve(__dirname, '../../..');
let clinic: Clinic;
let restored: Clinic | null = null;
let nurse: TestUser;
const tablets: SimTablet[] = [];
const folder = mkdtempSync(join(tmpdir(), 'fuselight-backup-'));

beforeAll(async () => {
  clinic = await startClinic();
  nurse = await clinic.person('orthoptist');
});

afterAll(async () => {
  for (const tablet of tablets) await tablet.close();
  await (restored ?? clinic)?.close();
  rmSync(folder, { recursive: true, force: true });
});

function script(args: string[], env: Record<string, string>): Promise<string> {
  return new Promise((resolvePromise, reject) => {
    const child = spawn('node', args, { cwd: repoRoot, env: { ...process.env, ...env } });
    let out = '';
    child.stdout.on('data', (d: Buffer) => (out += d.toString()));
    child.stderr.on('data', (d: Buffer) => (out += d.toString()));
    child.on('error', reject);
    child.on('exit', (code) =>
      code === 0 ? resolvePromise(out) : reject(new Error(`${args[0]} exited ${code}: ${out}`)),
    );
  });
}

const patient = (n: number) => ({
  siteId: clinic.siteId,
  givenName: `Child ${n}`,
  familyName: 'Adeyemi',
  dateOfBirth: '2015-07-21',
  clinicNumber: `BK-${n}`,
});

describe('a backup taken while tablets push, and a restore', () => {
  it('holds every change acknowledged before it began; tablets ahead of it pull again; all converge', async () => {
    const writers = await Promise.all(
      ['north', 'south', 'east'].map(async (name) => {
        const tablet = await SimTablet.create(clinic, name, [nurse]);
        tablets.push(tablet);
        return tablet;
      }),
    );
    const behind = await SimTablet.create(clinic, 'behind', [nurse], { pageLimit: 7 });
    const ahead = await SimTablet.create(clinic, 'ahead', [nurse], { pageLimit: 7 });
    tablets.push(behind, ahead);
    let n = 0;
    for (const w of writers) {
      for (let i = 0; i < 5; i += 1) await w.create('patient', patient((n += 1)));
      expect((await w.sync()).kind).toBe('synced');
    }
    expect((await behind.sync()).kind).toBe('synced');

    // Writers keep pushing while the backup runs.
    let backupDone = false;
    const writing = writers.map(async (w) => {
      for (let round = 0; round < 4 || !backupDone; round += 1) {
        await w.create('patient', patient((n += 1)));
        expect((await w.sync()).kind).toBe('synced');
      }
    });
    await new Promise((r) => setTimeout(r, 50));
    const ackedBefore = writers.flatMap((w) => [...w.acks]);
    const out = await script(['scripts/backup.mjs'], {
      DATABASE_URL: clinic.t.db.url,
      FUSELIGHT_BACKUP_DIR: folder,
    }).finally(() => {
      backupDone = true;
    });
    await Promise.all(writing);
    const file = /Backup written: (\S+\.dump)/.exec(out)?.[1];
    expect(file, out).toBeTruthy();
    // Pushed after the backup began: the ahead tablet pulls them, so its cursor passes the backup.
    for (const w of writers) {
      await w.create('patient', patient((n += 1)));
      expect((await w.sync()).kind).toBe('synced');
    }
    expect((await ahead.sync()).kind).toBe('synced');
    const before = await databaseSnapshot(clinic);

    // The server is restored into a fresh database and started again on the same address.
    const address = clinic.t.app.getHttpServer().address();
    if (address === null || typeof address === 'string') throw new Error('no port');
    await clinic.t.app.close();
    const db = await createTestDatabase({ empty: true });
    const restoreOut = await script(['scripts/restore.mjs', file!, '--yes', '--into', db.url], {});
    expect(restoreOut).toMatch(/Restored \d+ records/);
    const t = await createTestApp({ db, clock: clinic.t.clock });
    await t.app.listen(address.port, '127.0.0.1');
    restored = { ...clinic, t };
    await clinic.t.db.drop();

    // Every change acknowledged before the backup began is there, at its version or a later one.
    const after = await databaseSnapshot(restored);
    const applied = ackedBefore.filter((a) => a.result.status === 'applied');
    expect(applied.length).toBeGreaterThanOrEqual(15);
    for (const { entry, result } of applied) {
      if (result.status !== 'applied') continue;
      const key = `${entry.collection}/${entry.recordId}`;
      expect(after[key], key).toBeDefined();
      expect(after[key]!.version).toBeGreaterThanOrEqual(result.version);
    }
    // Some changes came after the backup began and are not in it.
    expect(Object.keys(after).length).toBeLessThan(Object.keys(before).length);

    // Unsent work on the tablets meanwhile: it goes out to the restored server.
    const fromBehind = await behind.create('patient', patient((n += 1)));
    const fromAhead = await ahead.create('patient', patient((n += 1)));

    const seen: Array<FullRepull | null> = [];
    const stop = ahead.engine.status.subscribe(() =>
      seen.push(ahead.engine.status.getSnapshot().fullRepull),
    );
    expect((await ahead.syncUntilSettled()).kind).toBe('synced');
    stop();
    expect(seen.some((s) => s?.reason === 'restored')).toBe(true);
    expect(ahead.engine.status.getSnapshot().fullRepull?.finishedAt).not.toBeNull();
    expect((await behind.syncUntilSettled()).kind).toBe('synced');
    expect(behind.engine.status.getSnapshot().fullRepull).toBeNull();

    // Once more round, so each has what the other pushed.
    expect((await ahead.syncUntilSettled()).kind).toBe('synced');
    const server = await databaseSnapshot(restored);
    expect(server[`patient/${fromBehind}`]).toBeDefined();
    expect(server[`patient/${fromAhead}`]).toBeDefined();
    await expectHoldsServerRecords(restored, behind);
    // The ahead tablet holds every record of the restored server; records it pulled that the
    // backup did not hold stay on it (docs/sync-protocol.md, "Restoring the server from a backup").
    const mine = await ahead.snapshot();
    for (const [key, entry] of Object.entries(server)) expect(mine[key], key).toEqual(entry);
  }, 180_000);
});
