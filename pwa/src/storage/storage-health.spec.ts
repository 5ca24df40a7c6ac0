import { describe, expect, it, vi } from 'vitest';
import {
  askForPersistentStorage,
  describeBytes,
  describeUsage,
  readStorageHealth,
  type BrowserStorage,
} from './storage-health';

function storage(persisted: boolean, usage: number, quota: number): BrowserStorage {
  return {
    persist: vi.fn(async () => persisted),
    persisted: async () => persisted,
    estimate: async () => ({ usage, quota }),
  };
}

describe('the tablet’s storage as the browser sees it', () => {
  it('warns from 80 % of the quota and not below', async () => {
    expect((await readStorageHealth(storage(true, 799, 1000))).nearlyFull).toBe(false);
    const full = await readStorageHealth(storage(true, 800, 1000));
    expect(full).toMatchObject({ persisted: true, usedShare: 0.8, nearlyFull: true });
  });

  it('says what a browser without the storage API cannot tell', async () => {
    expect(await readStorageHealth(null)).toEqual({
      persistenceSupported: false,
      persisted: null,
      usage: null,
      quota: null,
      usedShare: null,
      nearlyFull: false,
    });
    expect(describeUsage(await readStorageHealth({}))).toBe(
      'This browser does not say how much storage Fuselight uses.',
    );
    expect(await askForPersistentStorage(null)).toBeNull();
  });

  it('reports a refusal to persist as false, and a failing request as a refusal', async () => {
    expect(await askForPersistentStorage(storage(false, 0, 1))).toBe(false);
    expect(
      await askForPersistentStorage({
        persist: () => Promise.reject(new Error('not allowed')),
      }),
    ).toBe(false);
  });

  it('words usage and quota in decimal units, as browsers report them', async () => {
    expect(describeBytes(512)).toBe('512 bytes');
    expect(describeBytes(340_000)).toBe('340 kB');
    expect(describeBytes(12_500_000)).toBe('12.5 MB');
    expect(describeBytes(10_737_418_240)).toBe('10.7 GB');
    expect(
      describeUsage(await readStorageHealth(storage(true, 1_300_000_000, 10_737_418_240))),
    ).toBe('1.3 GB used of 10.7 GB (12 %).');
  });
});
