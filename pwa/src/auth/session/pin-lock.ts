// The PIN lock: each person's PIN (it opens their key slot of the tablet's data key; nothing
// else about it is stored), their wrong attempts, and the clinic's unlock policy (how long after
// the server last saw someone their PIN still unlocks the tablet offline, and how many wrong PINs
// are allowed). A wrong PIN only counts: it never erases anything. It keeps its own rows of the
// auth database (the pins table and the policy setting); the session store asks it whether a PIN
// unlocks and makes the person active itself.
import type { AuthDb, PersonSession, PinRecord } from '../auth-db';
import { HARDWARE_REFUSED, HARDWARE_UNAVAILABLE } from '../../data/crypto/hardware-share';
import { KeyUnavailableError, type KeyRing, type SlotPerson } from '../../data/crypto/key-ring';
import { verifyPin } from '../pin-hash';
import { isAcceptablePin, PIN_RULE } from '../pin-rule';
import { secretShortfall } from '../secret-policy';
import {
  DEFAULT_UNLOCK_POLICY,
  type KnownPerson,
  type UnlockPolicy,
  type UnlockResult,
} from './types';

const POLICY_KEY = 'unlockPolicy';
const HOUR_MS = 3_600_000;

export interface PinLockOptions {
  /** The auth database now in use (it is opened again after an erasure). */
  db: () => AuthDb;
  now: () => number;
  /** Rebuilds the session snapshot and tells its listeners. */
  publish: () => void;
  /** The tablet's key slots: a PIN is set by wrapping the data key under it. */
  keys: Pick<KeyRing, 'addPinSlot' | 'unlockWithPin' | 'removePinSlot' | 'hardwareAvailable'>;
}

export type PinStatus = Pick<
  KnownPerson,
  'hasPin' | 'pinAttemptsLeft' | 'canUnlockWithPin' | 'unlockWindowEndsAt' | 'pinHardwareRefused'
>;

export class PinLock {
  private pins = new Map<string, PinRecord>();
  private current: UnlockPolicy = DEFAULT_UNLOCK_POLICY;

  constructor(private readonly options: PinLockOptions) {}

  get policy(): UnlockPolicy {
    return this.current;
  }

  /** Reads the PINs and the policy kept on the tablet. */
  async load(): Promise<void> {
    const db = this.options.db();
    const [pins, policy] = await Promise.all([db.pins.toArray(), db.settings.get(POLICY_KEY)]);
    this.pins = new Map(pins.map((p) => [p.userId, p]));
    if (policy?.value)
      this.current = { ...DEFAULT_UNLOCK_POLICY, ...(policy.value as UnlockPolicy) };
  }

  /** Whether the person's secret is digits or a passphrase; null when it was never noted. */
  secretKind(userId: string): 'pin' | 'passphrase' | null {
    return this.pins.get(userId)?.secretKind ?? null;
  }

  hasPin(userId: string): boolean {
    return this.pins.has(userId);
  }

  /** The platform authenticator did not answer for the person's PIN the last time it was asked. */
  hardwareRefused(userId: string): boolean {
    return this.pins.get(userId)?.hardwareRefusedAt !== undefined;
  }

  /** What the unlock screen shows of a person's PIN. */
  status(person: PersonSession, tabletEnrolled: boolean): PinStatus {
    const pin = this.pins.get(person.userId);
    const attemptsLeft = pin ? Math.max(0, this.current.maxPinAttempts - pin.failedAttempts) : 0;
    const windowEnds = person.confirmedAt + this.current.offlineUnlockHours * HOUR_MS;
    return {
      hasPin: !!pin,
      pinAttemptsLeft: attemptsLeft,
      canUnlockWithPin:
        !!pin &&
        attemptsLeft > 0 &&
        this.options.now() <= windowEnds &&
        !person.signInRequired &&
        tabletEnrolled,
      unlockWindowEndsAt: windowEnds,
      pinHardwareRefused: pin?.hardwareRefusedAt !== undefined,
    };
  }

  /**
   * What is still missing from `secret` under the clinic's rule for tablets without a platform
   * authenticator; null when it may be set (always, on a tablet with one).
   */
  async shortfall(secret: string): Promise<string | null> {
    if (await this.options.keys.hardwareAvailable()) return null;
    return secretShortfall(secret, this.current.unlockWithoutHardware);
  }

  /**
   * Sets a person's PIN (a key slot wrapped under it, with the tablet's hardware share where it
   * has a platform authenticator), with no wrong attempts. Without one, the clinic's rule for
   * such tablets is enforced here too, in words naming what is missing.
   */
  async setPin(userId: string, pin: string, person?: SlotPerson): Promise<void> {
    if (!isAcceptablePin(pin)) throw new Error(PIN_RULE);
    const missing = await this.shortfall(pin);
    if (missing) throw new Error(missing);
    await this.options.keys.addPinSlot(userId, pin, person);
    const record: PinRecord = {
      userId,
      keySlot: true,
      secretKind: secretKindOf(pin),
      failedAttempts: 0,
      setAt: this.options.now(),
    };
    await this.options.db().pins.put(record);
    this.pins.set(userId, record);
  }

  /** Whether `pin` is right: it opens the person's key slot (or, once, their old PIN hash). */
  private async verify(record: PinRecord, pin: string): Promise<'right' | 'wrong' | UnlockFailure> {
    if (record.keySlot) {
      const opened = await this.options.keys.unlockWithPin(record.userId, pin);
      if (opened === 'hardware-refused' || opened === 'hardware-unavailable') {
        // Says nothing about the PIN: not counted as a wrong one, and nothing is erased. Noted,
        // so that the person's next online sign-in offers to set the PIN again.
        const hardwareRefusedAt = this.options.now();
        await this.options.db().pins.update(record.userId, { hardwareRefusedAt });
        this.pins.set(record.userId, { ...record, hardwareRefusedAt });
        this.options.publish();
        return fail(
          'hardware',
          opened === 'hardware-refused' ? HARDWARE_REFUSED : HARDWARE_UNAVAILABLE,
          Math.max(0, this.current.maxPinAttempts - record.failedAttempts),
        );
      }
      if (opened === 'no-slot') {
        return fail(
          'no-pin',
          'Your PIN no longer opens this tablet; sign in with your password and set it again.',
          0,
        );
      }
      return opened === 'unlocked' ? 'right' : 'wrong';
    }
    // A PIN set before the tablet was protected: its hash is checked one last time, and the PIN
    // moves into a key slot (the hash is deleted).
    const { salt, hash, iterations } = record;
    if (salt === undefined || hash === undefined || iterations === undefined) return 'wrong';
    if (!(await verifyPin(pin, { salt, hash, iterations }))) return 'wrong';
    if (!isAcceptablePin(pin)) {
      await this.options.db().pins.delete(record.userId);
      this.pins.delete(record.userId);
      this.options.publish();
      return fail(
        'no-pin',
        'PINs are now at least 6 digits. Sign in with your password once, then choose a new PIN.',
        0,
      );
    }
    try {
      await this.options.keys.addPinSlot(record.userId, pin);
    } catch (error) {
      if (!(error instanceof KeyUnavailableError)) throw error;
      return fail('locked-out', `${error.message}`, 0);
    }
    const moved: PinRecord = {
      userId: record.userId,
      keySlot: true,
      secretKind: secretKindOf(pin),
      failedAttempts: record.failedAttempts,
      setAt: record.setAt,
    };
    await this.options.db().pins.put(moved);
    this.pins.set(record.userId, moved);
    return 'right';
  }

  /**
   * Whether `pin` unlocks the tablet for `person`; counts a wrong one, and clears the count on
   * the right one. The caller makes the person active when it does.
   */
  async check(
    userId: string,
    person: PersonSession | undefined,
    pin: string,
    tabletEnrolled: boolean,
  ): Promise<UnlockResult> {
    const record = this.pins.get(userId);
    const { maxPinAttempts, offlineUnlockHours } = this.current;
    if (!tabletEnrolled) {
      return fail(
        'not-enrolled',
        'PIN unlock needs an enrolled tablet; sign in with your password.',
        0,
      );
    }
    if (!person || !record) {
      return fail('no-pin', 'No PIN is set for this person here; sign in with your password.', 0);
    }
    if (person.signInRequired || record.failedAttempts >= maxPinAttempts) {
      return fail(
        'locked-out',
        person.signInRequired
          ? `${person.signInRequired.reason} Sign in with your password.`
          : `Too many wrong PINs. Sign in with your password while online.`,
        0,
      );
    }
    if (this.options.now() > person.confirmedAt + offlineUnlockHours * HOUR_MS) {
      this.options.publish();
      return fail(
        'window-closed',
        `Your PIN unlocks this tablet for ${offlineUnlockHours} hours after the clinic server last saw you. Sign in with your password while online.`,
        maxPinAttempts - record.failedAttempts,
      );
    }
    const verdict = await this.verify(record, pin);
    if (typeof verdict === 'object') return verdict;
    if (verdict === 'wrong') {
      const failedAttempts = record.failedAttempts + 1;
      await this.options.db().pins.update(userId, { failedAttempts });
      this.pins.set(userId, { ...record, failedAttempts });
      this.options.publish();
      const left = Math.max(0, maxPinAttempts - failedAttempts);
      return left === 0
        ? fail('locked-out', 'Too many wrong PINs. Sign in with your password while online.', 0)
        : fail(
            'wrong-pin',
            `That PIN is not right. ${left} attempt${left === 1 ? '' : 's'} left.`,
            left,
          );
    }
    await this.options.db().pins.update(userId, { failedAttempts: 0 });
    this.pins.set(userId, { ...(this.pins.get(userId) ?? record), failedAttempts: 0 });
    return { ok: true };
  }

  /** Clears a person's wrong attempts in the database (inside the caller's transaction). */
  async writeAttemptsCleared(userId: string): Promise<void> {
    await this.options.db().pins.update(userId, { failedAttempts: 0 });
  }

  /** Clears a person's wrong attempts in memory, once the database write has committed. */
  noteAttemptsCleared(userId: string): void {
    const pin = this.pins.get(userId);
    if (pin) this.pins.set(userId, { ...pin, failedAttempts: 0 });
  }

  /** Deletes a person's PIN from the database (inside the caller's transaction). */
  async writeRemoved(userId: string): Promise<void> {
    await this.options.db().pins.delete(userId);
  }

  /**
   * Forgets a person's PIN in memory, once the database write has committed, and their key slot
   * (kept when it is the tablet's last way to the data key, so nothing becomes unreadable).
   */
  async noteRemoved(userId: string): Promise<void> {
    this.pins.delete(userId);
    await this.options.keys.removePinSlot(userId);
  }

  /** Takes the clinic's policy; values out of range are ignored. */
  async setPolicy(policy: Partial<UnlockPolicy>): Promise<void> {
    const next = { ...this.current };
    if (policy.offlineUnlockHours !== undefined && policy.offlineUnlockHours > 0) {
      next.offlineUnlockHours = policy.offlineUnlockHours;
    }
    if (policy.maxPinAttempts !== undefined && policy.maxPinAttempts >= 1) {
      next.maxPinAttempts = Math.floor(policy.maxPinAttempts);
    }
    if (
      policy.idleLockMinutes !== undefined &&
      policy.idleLockMinutes >= 1 &&
      policy.idleLockMinutes <= 60
    ) {
      next.idleLockMinutes = policy.idleLockMinutes;
    }
    if (policy.unsyncedWarningHours !== undefined && policy.unsyncedWarningHours >= 1) {
      next.unsyncedWarningHours = Math.floor(policy.unsyncedWarningHours);
    }
    // The schema (and zod) load here, not with the first screen: a policy comes from the server.
    const { unlockWithoutHardwareSchema } = await import('@fuselight/shared/admin-views');
    const rule = unlockWithoutHardwareSchema.safeParse(policy.unlockWithoutHardware);
    if (rule.success) next.unlockWithoutHardware = rule.data;
    this.current = next;
    await this.options.db().settings.put({ key: POLICY_KEY, value: next });
  }

  /** Forgets every PIN and the policy (the tablet's databases were erased). */
  clear(): void {
    this.pins.clear();
    this.current = DEFAULT_UNLOCK_POLICY;
  }
}

type UnlockFailure = Exclude<UnlockResult, { ok: true }>;

function fail(
  reason: UnlockFailure['reason'],
  message: string,
  attemptsLeft: number,
): UnlockFailure {
  return { ok: false, reason, message, attemptsLeft };
}

/** Digits only: a PIN; anything else the rule accepts is a passphrase of 12 or more characters. */
export function secretKindOf(secret: string): 'pin' | 'passphrase' {
  return /^\d+$/.test(secret) ? 'pin' : 'passphrase';
}
