// The device's hybrid logical clock, persisted in the meta table so that stamps keep increasing
// across reloads. Always called inside the caller's Dexie transaction (which must include meta).
import { createClock, receive, tick, type HlcClock } from '@fuselight/shared';
import type { FuselightDb } from './db';

const CLOCK_KEY = 'hlc';

async function readClock(db: FuselightDb, deviceId: string): Promise<HlcClock> {
  const stored = (await db.meta.get(CLOCK_KEY))?.value as HlcClock | undefined;
  const fresh = createClock(deviceId);
  if (!stored) return fresh;
  // A re-enrolled tablet gets a new device id; its clock never goes back.
  return { ...stored, deviceId };
}

/** Ticks the device clock for a local edit and returns the edit's stamp. */
export async function tickDeviceClock(
  db: FuselightDb,
  deviceId: string,
  nowMs: number,
): Promise<string> {
  const clock = await readClock(db, deviceId);
  const next = tick(clock, nowMs);
  await db.meta.put({ key: CLOCK_KEY, value: next.clock });
  return next.stamp;
}

/** Advances the device clock past the greatest stamp received in a pull. */
export async function receiveIntoDeviceClock(
  db: FuselightDb,
  deviceId: string,
  stamp: string,
  nowMs: number,
): Promise<void> {
  const clock = await readClock(db, deviceId);
  await db.meta.put({ key: CLOCK_KEY, value: receive(clock, stamp, nowMs) });
}

export async function peekDeviceClock(db: FuselightDb): Promise<HlcClock | undefined> {
  return (await db.meta.get(CLOCK_KEY))?.value as HlcClock | undefined;
}
