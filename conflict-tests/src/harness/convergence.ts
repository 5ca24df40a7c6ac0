// Guarantee 1 of docs/sync-protocol.md, convergence: once tablets stop editing and sync, each holds
// exactly the server's records for its user's scope, every field of every record, both ways.
import { expect } from 'vitest';
import type { Clinic } from './clinic-server';
import { databaseSnapshot } from './server-records';
import { serverSnapshot } from './server-view';
import type { SimTablet } from './sim-tablet';

/**
 * Asserts that `tablet` holds the same records as the server's tables hold for its user's sites
 * (read directly, so a pull that skips or repeats records cannot hide itself), and that a fresh
 * pull from 0 shows the same: no record missing on either side, every field, version, tombstone
 * and open dispute equal, and no field still pending.
 */
export async function expectHoldsServerRecords(clinic: Clinic, tablet: SimTablet): Promise<void> {
  const token = await tablet.auth.tokenFor(tablet.user.id);
  expect(token, `${tablet.name}: no session for ${tablet.user.id}`).toBeTruthy();
  const sites = tablet.user.siteIds.filter((id) => tablet.device.siteIds.includes(id));
  const server = await databaseSnapshot(clinic, sites);
  expect(await serverSnapshot(clinic, token!), `${tablet.name}: the server's pull view`).toEqual(
    server,
  );
  const mine = await tablet.snapshot();
  expect(Object.keys(mine).sort(), `${tablet.name}: records held`).toEqual(
    Object.keys(server).sort(),
  );
  expect(mine, `${tablet.name}: records`).toEqual(server);
  const withPending = (await tablet.db.records.toArray()).filter((r) => r.pendingFields.length > 0);
  expect(withPending, `${tablet.name}: records with pending fields`).toEqual([]);
}

/** Syncs every tablet until settled, twice round, then asserts each holds the server's records. */
export async function expectConverged(
  clinic: Clinic,
  tablets: readonly SimTablet[],
): Promise<void> {
  for (let round = 0; round < 2; round += 1) {
    for (const t of tablets) expect((await t.syncUntilSettled()).kind, `${t.name}`).toBe('synced');
  }
  for (const t of tablets) await expectHoldsServerRecords(clinic, t);
}
