// The tablet's key slots and its data key: makes the key at the first online sign-in on an
// enrolled tablet (under the server's share) or the first PIN, whichever comes first, and then
// seals what the tablet already holds, in place; adds a slot per person, opens a slot with
// a PIN, locks (drops the key and every plain value held in memory) and crypto-erases (destroys
// every slot first, so the data is unreadable at once, before it is deleted).
// docs/threat-model.md says what this protects and what it does not.
import type Dexie from 'dexie';
import type { FuselightDb } from '../db';
import type { DataKeyVault } from './data-key-vault';
import {
  DEFAULT_KDF,
  makePinSlot,
  makeServerSlot,
  newDataKey,
  openPinSlot,
  openServerSlot,
  pinSlotId,
  type KdfParams,
} from './key-slots';
import { sealInPlace, type SealProgress } from './seal-in-place';

const SEALING_KEY = 'sealing';

/** A database with tables the sealing layer seals (rewritten in place once the key exists). */
export interface SealedDatabase {
  db: Dexie;
  tables: readonly string[];
}

export type PinUnlock = 'unlocked' | 'wrong' | 'no-slot';

/** How this tablet's key is protected, for the Fleet screen. */
export type KeyProtection = 'none' | 'pin' | 'pin+server';

/** The data key cannot be had: the tablet is locked and no slot was opened. */
export class KeyUnavailableError extends Error {
  override readonly name = 'KeyUnavailableError';
}

export interface KeyRingOptions {
  /** The records database, which keeps the key slots. */
  db: () => FuselightDb;
  /** Every database sealed with this key (the records database included). */
  sealed: () => SealedDatabase[];
  vault: DataKeyVault;
  now?: () => number;
  kdf?: KdfParams;
  onSealProgress?: (progress: SealProgress) => void;
}

export class KeyRing {
  private readonly now: () => number;
  private readonly kdf: KdfParams;

  constructor(private readonly options: KeyRingOptions) {
    this.now = options.now ?? (() => Date.now());
    this.kdf = options.kdf ?? DEFAULT_KDF;
  }

  get vault(): DataKeyVault {
    return this.options.vault;
  }

  /** Reads whether slots exist: a tablet with slots is protected and starts locked. */
  async load(): Promise<void> {
    const count = await this.options.db().keySlots.count();
    if (count > 0) this.options.vault.markProtected();
  }

  async hasPinSlot(userId: string): Promise<boolean> {
    return (await this.options.db().keySlots.get(pinSlotId(userId))) !== undefined;
  }

  async protection(): Promise<KeyProtection> {
    const slots = await this.options.db().keySlots.toArray();
    if (slots.length === 0) return 'none';
    return slots.some((slot) => slot.kind === 'server') ? 'pin+server' : 'pin';
  }

  /** Which slots exist: the people whose PIN or passphrase opens the key, and the server's. */
  async slotSummary(): Promise<{ pinUserIds: string[]; server: boolean }> {
    const slots = await this.options.db().keySlots.toArray();
    return {
      pinUserIds: slots.filter((slot) => slot.kind === 'pin').map((slot) => slot.userId),
      server: slots.some((slot) => slot.kind === 'server'),
    };
  }

  /**
   * Wraps the data key for `userId` under `secret`. On a tablet not protected yet, the key is
   * made here and everything already stored is sealed in place. A protected tablet must be
   * unlocked (by a PIN or an online sign-in) for a slot to be added.
   */
  async addPinSlot(userId: string, secret: string): Promise<void> {
    const { vault } = this.options;
    const db = this.options.db();
    let key = vault.dataKey;
    let fresh = false;
    if (!key) {
      if ((await db.keySlots.count()) > 0) {
        throw new KeyUnavailableError(
          'This tablet is locked: unlock it or sign in with your password while online to set a PIN.',
        );
      }
      key = await newDataKey();
      fresh = true;
    }
    const slot = await makePinSlot(key, userId, secret, this.now(), this.kdf);
    await db.keySlots.put(slot);
    vault.hold(key);
    if (fresh) await this.finishSealing();
  }

  /** Opens `userId`'s slot with `secret`; a wrong secret changes nothing. */
  async unlockWithPin(userId: string, secret: string): Promise<PinUnlock> {
    const slot = await this.options.db().keySlots.get(pinSlotId(userId));
    if (!slot) return 'no-slot';
    const key = await openPinSlot(slot, secret);
    if (!key) return 'wrong';
    this.options.vault.hold(key);
    await this.finishSealing();
    return 'unlocked';
  }

  /**
   * After an online sign-in: keeps a slot under the server's share for this tablet (made when
   * unlocked), or opens it when locked. A tablet not protected yet is protected here: the data
   * key is made before anything is pulled, so no patient value is ever written in the clear
   * (the storage engine's log would keep it). False when there is no slot to open.
   */
  async useServerShare(share: Uint8Array): Promise<boolean> {
    const { vault } = this.options;
    const db = this.options.db();
    if (!vault.dataKey && (await db.keySlots.count()) === 0) {
      const key = await newDataKey();
      await db.keySlots.put(await makeServerSlot(key, share, this.now()));
      vault.hold(key);
      await this.finishSealing();
      return true;
    }
    const slot = await db.keySlots.get('server');
    if (vault.dataKey) {
      if (!slot) await db.keySlots.put(await makeServerSlot(vault.dataKey, share, this.now()));
      return true;
    }
    if (!slot) return false;
    const key = await openServerSlot(slot, share);
    if (!key) return false;
    vault.hold(key);
    await this.finishSealing();
    return true;
  }

  /** Removes a person's slot, unless it is the last way to the data key (nothing is lost). */
  async removePinSlot(userId: string): Promise<void> {
    const db = this.options.db();
    await db.transaction('rw', db.keySlots, async () => {
      if ((await db.keySlots.count()) > 1) await db.keySlots.delete(pinSlotId(userId));
    });
  }

  /** Drops the data key and every plain value held in memory. */
  lock(): void {
    this.options.vault.lock();
    this.options.db().patientDirectory.reset();
  }

  /** Crypto-erase: every slot destroyed and the key forgotten, before any data is deleted. */
  async destroySlots(): Promise<void> {
    this.lock();
    try {
      await this.options.db().keySlots.clear();
    } finally {
      this.options.vault.reset();
    }
  }

  /** Seals what is still stored in the clear (a first key, or a sealing cut short). */
  private async finishSealing(): Promise<void> {
    const db = this.options.db();
    const done = await db.meta.get(SEALING_KEY);
    if ((done?.value as { state?: string } | undefined)?.state === 'done') return;
    for (const target of this.options.sealed()) {
      await sealInPlace(target.db, target.tables, this.options.onSealProgress);
    }
    await db.meta.put({ key: SEALING_KEY, value: { state: 'done', at: this.now() } });
  }
}
