// The hardware share of a person's slot (docs/threat-model.md): the data key opens only with the
// PIN and the authenticator's PRF output together; only the credential id and the PRF salt are
// stored; a cancelled prompt or a removed credential is a worded failure that changes nothing.
import { afterEach, describe, expect, it } from 'vitest';
import { FuselightDb } from '../db';
import { RecordsRepository } from '../records-repository';
import { CLINICIAN_ID, DEVICE_ID, patientFields } from '../test-fixtures';
import { DataKeyVault } from './data-key-vault';
import { fakeHardware } from './fake-hardware.fixture';
import { KeyRing } from './key-ring';
import {
  KDF_FLOOR,
  makeHardwarePinSlot,
  newDataKey,
  openHardwarePinSlot,
  openPinSlot,
} from './key-slots';

/** Every binary value of every store of a database, read raw (no Dexie), in hex. */
async function binaryFieldsOf(databaseName: string): Promise<string[]> {
  const db = await new Promise<IDBDatabase>((resolve, reject) => {
    const request = indexedDB.open(databaseName);
    request.onsuccess = () => resolve(request.result);
    request.onerror = () => reject(request.error);
  });
  const found: string[] = [];
  const walk = (value: unknown): void => {
    if (value instanceof ArrayBuffer) found.push(Buffer.from(value).toString('hex'));
    else if (ArrayBuffer.isView(value))
      found.push(Buffer.from(value.buffer, value.byteOffset, value.byteLength).toString('hex'));
    else if (Array.isArray(value)) value.forEach(walk);
    else if (typeof value === 'object' && value !== null) Object.values(value).forEach(walk);
  };
  try {
    for (const store of db.objectStoreNames) {
      const values = await new Promise<unknown[]>((resolve, reject) => {
        const request = db.transaction(store).objectStore(store).getAll();
        request.onsuccess = () => resolve(request.result as unknown[]);
        request.onerror = () => reject(request.error);
      });
      values.forEach(walk);
    }
  } finally {
    db.close();
  }
  return found;
}

const opened: FuselightDb[] = [];
afterEach(async () => {
  for (const db of opened.splice(0)) {
    db.close();
    await db.delete();
  }
});

const AMARA = { name: 'Amara Okonkwo', email: 'amara@clinic.test' };
const random32 = () => crypto.getRandomValues(new Uint8Array(32));

async function exported(key: CryptoKey): Promise<string> {
  return Buffer.from(await crypto.subtle.exportKey('raw', key)).toString('hex');
}

function ringWith(hardware = fakeHardware()) {
  const name = `hardware-slot-${crypto.randomUUID()}`;
  const db = new FuselightDb(name, new DataKeyVault());
  opened.push(db);
  const withHardware = new KeyRing({
    db: () => db,
    sealed: () => [{ db, tables: ['records', 'outbox'] }],
    vault: db.vault,
    kdf: KDF_FLOOR,
    hardware,
  });
  return { db, name, hardware, keys: withHardware };
}

describe('a key slot that needs the PIN and the hardware share', () => {
  it('opens with both, and with neither alone', async () => {
    const dataKey = await newDataKey();
    const credentialId = crypto.getRandomValues(new Uint8Array(16));
    const prfSalt = random32();
    const prfOutput = random32();
    const slot = await makeHardwarePinSlot(
      dataKey,
      'amara',
      '482913',
      { credentialId, prfSalt, prfOutput },
      0,
      KDF_FLOOR,
    );
    expect(slot.hardware).toEqual({ credentialId, prfSalt });
    expect(JSON.stringify(slot)).not.toContain(Buffer.from(prfOutput).toString('hex'));

    const opened = await openHardwarePinSlot(slot, '482913', prfOutput);
    expect(opened && (await exported(opened))).toBe(await exported(dataKey));
    // The PIN without the hardware share, or the share with another PIN: nothing.
    expect(await openPinSlot(slot, '482913')).toBeNull();
    expect(await openHardwarePinSlot(slot, '482914', prfOutput)).toBeNull();
    expect(await openHardwarePinSlot(slot, '482913', random32())).toBeNull();
    // A slot moved onto another person fails too (its id is in the derivation and the AAD).
    expect(
      await openHardwarePinSlot({ ...slot, id: 'pin:tomasz' }, '482913', prfOutput),
    ).toBeNull();
  });
});

describe('the key ring with a platform authenticator', () => {
  it('makes a hardware slot when a PIN is set, and stores no PRF output', async () => {
    const { db, name, keys, hardware } = ringWith();
    expect(await keys.addPinSlot('amara', '482913', AMARA)).toBe('hardware');
    const records = new RecordsRepository(() => db);
    const id = await records.create('patient', patientFields(), {
      authorId: CLINICIAN_ID,
      deviceId: DEVICE_ID,
      nowMs: 1,
    });
    expect(await keys.slotSummary()).toEqual({
      pinUserIds: ['amara'],
      hardwareUserIds: ['amara'],
      server: false,
    });
    // Every byte string stored anywhere in the database, as hex: no PRF output among them.
    const stored = (await binaryFieldsOf(name)).join('|');
    expect(stored).toContain(Buffer.from(hardware.credentialIds()[0]!).toString('hex'));
    expect(hardware.outputs.length).toBeGreaterThan(0);
    for (const output of hardware.outputs) {
      expect(stored).not.toContain(Buffer.from(output).toString('hex'));
    }

    keys.lock();
    expect(await keys.unlockWithPin('amara', '000000')).toBe('wrong');
    expect(hardware.prompts).toBe(2);
    expect(await keys.unlockWithPin('amara', '482913')).toBe('unlocked');
    expect((await records.get('patient', id))?.fields.familyName).toBe('Okafor');
  });

  it('answers in words when the prompt is cancelled or the credential is gone, and loses nothing', async () => {
    const { db, keys, hardware } = ringWith();
    await keys.addPinSlot('amara', '482913', AMARA);
    const before = await db.keySlots.toArray();
    keys.lock();

    hardware.cancelNext();
    expect(await keys.unlockWithPin('amara', '482913')).toBe('hardware-refused');
    const slot = before[0]!;
    hardware.remove(slot.hardware!.credentialId);
    expect(await keys.unlockWithPin('amara', '482913')).toBe('hardware-refused');
    expect(keys.vault.unlocked).toBe(false);
    // Every slot is still there, unchanged.
    expect(await db.keySlots.toArray()).toEqual(before);
  });

  it('falls back to a PIN slot where the authenticator has no PRF, and refuses a cancelled enrolment', async () => {
    const noPrf = ringWith(fakeHardware({ prf: false }));
    expect(await noPrf.keys.addPinSlot('amara', '482913', AMARA)).toBe('pin');
    expect((await noPrf.keys.slotSummary()).hardwareUserIds).toEqual([]);
    noPrf.keys.lock();
    expect(await noPrf.keys.unlockWithPin('amara', '482913')).toBe('unlocked');

    const { db, keys, hardware } = ringWith();
    hardware.cancelNext();
    await expect(keys.addPinSlot('amara', '482913', AMARA)).rejects.toThrow(
      /screen lock did not confirm you/,
    );
    expect(await db.keySlots.count()).toBe(0);
  });

  it('makes a plain PIN slot when no person is named (an old PIN moving into a slot)', async () => {
    const { keys } = ringWith();
    expect(await keys.addPinSlot('amara', '482913')).toBe('pin');
  });
});
