// What the session store tells the screens (its snapshot) and the words it answers in.
import type { SessionUser } from '@fuselight/shared';
import type { UnlockWithoutHardware } from '@fuselight/shared/admin-views';
import type { KnownColleague, KnownSite, TabletCredentials } from '../auth-db';
import type { ErasureNote } from '../tablet-erasure';

/** The clinic's policy for its tablets, as the server last gave it (GET /api/devices/me). */
export interface UnlockPolicy {
  /** How long after the server last confirmed a person their PIN still unlocks offline. */
  offlineUnlockHours: number;
  /** Wrong PINs allowed before a full online sign-in is required. */
  maxPinAttempts: number;
  /** Minutes without a touch or a key (or hidden) after which a protected tablet locks. */
  idleLockMinutes: number;
  /**
   * How long edits may wait unsynced before every screen warns (the clinic setting of the same
   * name; pwa/src/storage/unsynced-age.ts).
   */
  unsyncedWarningHours: number;
  /**
   * What a secret must be on a tablet without a platform authenticator (the clinic setting of
   * the same name; pwa/src/auth/secret-policy.ts).
   */
  unlockWithoutHardware: UnlockWithoutHardware;
}
export const DEFAULT_UNLOCK_POLICY: UnlockPolicy = {
  offlineUnlockHours: 72,
  maxPinAttempts: 5,
  idleLockMinutes: 5,
  unsyncedWarningHours: 24,
  unlockWithoutHardware: { rule: 'pin-only' },
};

export interface KnownPerson {
  user: SessionUser;
  hasPin: boolean;
  pinAttemptsLeft: number;
  /** A PIN is set, attempts remain and the offline window is open. */
  canUnlockWithPin: boolean;
  /** Epoch ms after which the PIN no longer unlocks (the window closes). */
  unlockWindowEndsAt: number;
  /** The tablet's screen lock did not answer for this person's PIN the last time it was asked. */
  pinHardwareRefused: boolean;
  signInRequired: { reason: string; at: number } | null;
}

export interface SignInPrompt {
  userId: string;
  name: string;
  email: string;
  reason: string;
  /** Changes of this person still in the Outbox (they are kept, and sent after sign-in). */
  waitingChanges: number;
}

export interface AuthSnapshot {
  loaded: boolean;
  tablet: { deviceId: string; state: TabletCredentials['state'] } | null;
  people: KnownPerson[];
  activeUser: SessionUser | null;
  activeSiteId: string | null;
  prompts: SignInPrompt[];
  erasure: ErasureNote | null;
  /** Set while a retired tablet waits for its Outbox to empty before erasing. */
  retirement: { waitingChanges: number } | null;
  policy: UnlockPolicy;
  /** Who was just signed in on an enrolled tablet without a PIN: offer them one next. */
  pinOfferFor: string | null;
  /** Site names by id, as the server last gave them (kept in IndexedDB, so known offline). */
  sites: Readonly<Record<string, KnownSite>>;
  /** Names of the people who share a site with those signed in here, by id (kept offline). */
  colleagues: Readonly<Record<string, KnownColleague>>;
}

export type UnlockResult =
  | { ok: true }
  | {
      ok: false;
      /** `hardware`: the slot needs the platform authenticator, and it did not answer. */
      reason: 'wrong-pin' | 'locked-out' | 'window-closed' | 'no-pin' | 'not-enrolled' | 'hardware';
      message: string;
      attemptsLeft: number;
    };

export class SignInRequiredError extends Error {
  constructor(message = 'Sign in again to continue.') {
    super(message);
    this.name = 'SignInRequiredError';
  }
}
