// Guarantee 1 of sync-protocol.md, convergence: once tablets stop editing and sync, each holds
// exactly the server's records for its user's scope, every field of every record, both ways.
import { expect } from 'vitest';
import type { Clinic } from './clinic-server';
import { serverSnapshot } from './server-view';
import type { SimTablet } from './sim-tablet';

/**
 * Asserts that `tablet` holds the same records as the server shows its user (a fresh pull from
 * 0, so a change skipped behind a cursor shows as a difference): no record missing on either
 * side, every field, version, tombstone and open dispute equal, and no field still pending.
 */
export async function expectHoldsServerRecords(clinic: Clinic, tablet: SimTablet): Promise<void> {
  const token = await tablet.auth.tokenFor(tablet.user.id);
  expect(token, `${tablet.name}: no session for ${tablet.user.id}`).toBeTruthy();
  const server = await serverSnapshot(clinic, token!);
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
