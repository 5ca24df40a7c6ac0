// The tablet's key slots and its data key: makes the key at the first online sign-in on an
// enrolled tablet (under the server's share) or the first PIN, whichever comes first, and then
// seals what the tablet already holds, in place; adds a slot per person, opens a slot with
// a PIN, locks (drops the key and every plain value held in memory) and crypto-erases (destroys
// every slot first, so the data is unreadable at once, before it is deleted).
// docs/threat-model.md says what this protects and what it does not.
import type Dexie from 'dexie';
import type { FuselightDb } from '../db';
import type { DataKeyVault } from './data-key-vault';
import { HardwareShareError, noHardwareShare, type HardwareShare } from './hardware-share';
import {
  DEFAULT_KDF,
  makeHardwarePinSlot,
  makePinSlot,
  makeServerSlot,
  newDataKey,
  openHardwarePinSlot,
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

/**
 * `hardware-refused`: the slot needs the platform authenticator and it did not answer (cancelled,
 * timed out, or its credential is gone); `hardware-unavailable`: this page cannot reach it.
 * Neither says anything about the PIN, so neither counts as a wrong one.
 */
export type PinUnlock =
  'unlocked' | 'wrong' | 'no-slot' | 'hardware-refused' | 'hardware-unavailable';

/** Who a slot is made for (the platform authenticator shows the name when it asks). */
export interface SlotPerson {
  name: string;
  email: string;
}

/** How this tablet's key is protected, for the Fleet screen. */
export type KeyProtection = 'none' | 'pin' | 'pin+server';

/** The data key cannot be had: the tablet is locked and no slot was opened. */
export class KeyUnavailableError extends Error {
  override readonly name = 'KeyUnavailableError';
}

export interface KeyRingOptions {
  /** The records database, which keeps the key slots. */
  db: () => FuselightDb;
  /**
   * Whether that database may already be on the tablet (default: yes). False lets load() skip it
   * without making the database, or even its object, on a tablet that has never held records.
   */
  mayHoldSlots?: () => Promise<boolean>;
  /** Every database sealed with this key (the records database included). */
  sealed: () => SealedDatabase[];
  vault: DataKeyVault;
  now?: () => number;
  kdf?: KdfParams;
  /** The tablet's platform authenticator, if any (default: none, every slot a PIN slot). */
  hardware?: HardwareShare;
  onSealProgress?: (progress: SealProgress) => void;
}

export class KeyRing {
  private readonly now: () => number;
  private readonly kdf: KdfParams;
  private readonly hardware: HardwareShare;
  private hardwareKnown: Promise<boolean> | null = null;

  constructor(private readonly options: KeyRingOptions) {
    this.now = options.now ?? (() => Date.now());
    this.kdf = options.kdf ?? DEFAULT_KDF;
    this.hardware = options.hardware ?? noHardwareShare;
  }

  /** Whether new slots get the hardware share (a platform authenticator with PRF is there). */
  hardwareAvailable(): Promise<boolean> {
    this.hardwareKnown ??= this.hardware.available().catch(() => false);
    return this.hardwareKnown;
  }

  get vault(): DataKeyVault {
    return this.options.vault;
  }

  /** Reads whether slots exist: a tablet with slots is protected and starts locked. */
  async load(): Promise<void> {
    // A tablet without the records database has no slot: do not create it to count none.
    if (this.options.mayHoldSlots && !(await this.options.mayHoldSlots())) return;
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

  /**
   * Which slots exist: the people whose PIN or passphrase opens the key, those of them whose
   * slot also needs the hardware share, and the server's.
   */
  async slotSummary(): Promise<{
    pinUserIds: string[];
    hardwareUserIds: string[];
    server: boolean;
  }> {
    const slots = await this.options.db().keySlots.toArray();
    const pins = slots.filter((slot) => slot.kind === 'pin');
    return {
      pinUserIds: pins.map((slot) => slot.userId),
      hardwareUserIds: pins.filter((slot) => slot.hardware).map((slot) => slot.userId),
      server: slots.some((slot) => slot.kind === 'server'),
    };
  }

  /**
   * Wraps the data key for `userId` under `secret`. On a tablet not protected yet, the key is
   * made here and everything already stored is sealed in place. A protected tablet must be
   * unlocked (by a PIN or an online sign-in) for a slot to be added.
   *
   * With `person` given and a platform authenticator that supports PRF, the slot needs the
   * hardware share as well ('hardware'); where the authenticator turns out to have no PRF it is
   * a PIN slot ('pin'). A person who cancels the authenticator's prompt gets a
   * HardwareShareError and no slot is written (their old one, if any, stays).
   */
  async addPinSlot(
    userId: string,
    secret: string,
    person?: SlotPerson,
  ): Promise<'hardware' | 'pin'> {
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
    const enrolment = person ? await this.enrolHardware(userId, person) : null;
    const slot = enrolment
      ? await makeHardwarePinSlot(
          key,
          userId,
          secret,
          {
            credentialId: enrolment.credentialId,
            prfSalt: enrolment.salt,
            prfOutput: enrolment.output,
          },
          this.now(),
          this.kdf,
        )
      : await makePinSlot(key, userId, secret, this.now(), this.kdf);
    enrolment?.output.fill(0);
    await db.keySlots.put(slot);
    vault.hold(key);
    if (fresh) await this.finishSealing();
    return enrolment ? 'hardware' : 'pin';
  }

  /** A credential and its PRF output for a new slot; null where there is no hardware share. */
  private async enrolHardware(userId: string, person: SlotPerson) {
    if (!(await this.hardwareAvailable())) return null;
    try {
      return await this.hardware.enrol({ userId, ...person });
    } catch (error) {
      if (error instanceof HardwareShareError && error.failure === 'unavailable') return null;
      throw error;
    }
  }

  /** Opens `userId`'s slot with `secret`; a wrong secret changes nothing. */
  async unlockWithPin(userId: string, secret: string): Promise<PinUnlock> {
    const slot = await this.options.db().keySlots.get(pinSlotId(userId));
    if (!slot) return 'no-slot';
    let key: CryptoKey | null;
    if (slot.hardware) {
      // The authenticator first, while the person's tap still counts as a gesture; then argon2id.
      let prfOutput: Uint8Array;
      try {
        prfOutput = await this.hardware.evaluate(slot.hardware.credentialId, slot.hardware.prfSalt);
      } catch (error) {
        if (!(error instanceof HardwareShareError)) throw error;
        return error.failure === 'refused' ? 'hardware-refused' : 'hardware-unavailable';
      }
      key = await openHardwarePinSlot(slot, secret, prfOutput);
      prfOutput.fill(0);
    } else {
      key = await openPinSlot(slot, secret);
    }
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
