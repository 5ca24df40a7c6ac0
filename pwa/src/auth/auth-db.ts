// The tablet's own identity store, kept apart from the records database (pwa/src/data/db.ts):
// the enrolled tablet's credentials, each person's tokens, their PIN hash (never the PIN), and
// the unlock policy, and the names of the sites of the people who signed in here. Only
// pwa/src/auth talks to it.
import Dexie, { type EntityTable } from 'dexie';
import type { SessionUser } from '@fuselight/shared';

export const AUTH_DB_NAME = 'fuselight-auth';

/** The enrolled tablet. One row, key 'tablet'. */
export interface TabletCredentials {
  key: 'tablet';
  deviceId: string;
  /** Presented at every sign-in on this tablet; the server stores only its hash. */
  deviceSecret: string;
  enrolledAt: number;
  /** 'retired' once the server said so: the tablet empties its Outbox, then erases itself. */
  state: 'active' | 'retired';
}

/** A person who signed in on this tablet, with their own session (kept per author). */
export interface PersonSession {
  userId: string;
  user: SessionUser;
  accessToken: string | null;
  /** Epoch ms at which the access token stops being accepted (from its `exp` claim). */
  accessExpiresAt: number;
  refreshToken: string | null;
  /** Last time the server confirmed this person (sign-in or successful refresh). */
  confirmedAt: number;
  /** Set when the server refused this person's session: they must sign in again online. */
  signInRequired: { reason: string; at: number } | null;
  activeSiteId: string | null;
}

/**
 * A person's PIN for offline unlock. Since the tablet is protected, the PIN is checked by opening
 * the person's key slot (pwa/src/data/crypto/key-slots.ts) and nothing about it is kept here but
 * the wrong attempts. A PIN set before that still has its PBKDF2 hash (salt, hash, iterations)
 * until its first unlock moves it into a key slot.
 */
export interface PinRecord {
  userId: string;
  /** The PIN opens this person's key slot. */
  keySlot?: true;
  /**
   * What the person chose: digits only (`pin`) or a passphrase. Absent for slots made before it
   * was noted, which count as a PIN (the weaker) in the tablet's report to the Fleet.
   */
  secretKind?: 'pin' | 'passphrase';
  /** base64 (a PIN set before the tablet was protected) */
  salt?: string;
  /** base64 of the derived bits (a PIN set before the tablet was protected) */
  hash?: string;
  iterations?: number;
  failedAttempts: number;
  setAt: number;
  /**
   * When the platform authenticator last did not answer for this person's slot (cancelled, timed
   * out or its credential gone): their next online sign-in offers to set the PIN again.
   */
  hardwareRefusedAt?: number;
}

/** A site's name as the server last gave it (GET /api/me/sites), kept so it shows offline. */
export interface KnownSite {
  id: string;
  name: string;
  kind: 'clinic' | 'outreach';
  timeZone: string;
  /** The site's address for letterheads; absent when the server did not give one. */
  address?: string | null;
  /** Epoch ms of the answer it came from. */
  fetchedAt: number;
}

/** A colleague's name as the server last gave it (GET /api/me/colleagues), kept for offline. */
export interface KnownColleague {
  id: string;
  name: string;
  role: 'orthoptist' | 'supervisor' | 'admin';
  fetchedAt: number;
}

export interface AuthSetting {
  key: string;
  value: unknown;
}

export class AuthDb extends Dexie {
  tablet!: EntityTable<TabletCredentials, 'key'>;
  people!: EntityTable<PersonSession, 'userId'>;
  pins!: EntityTable<PinRecord, 'userId'>;
  settings!: EntityTable<AuthSetting, 'key'>;
  sites!: EntityTable<KnownSite, 'id'>;
  colleagues!: EntityTable<KnownColleague, 'id'>;

  constructor(name = AUTH_DB_NAME) {
    super(name);
    this.version(1).stores({
      tablet: 'key',
      people: 'userId',
      pins: 'userId',
      settings: 'key',
    });
    this.version(2).stores({
      tablet: 'key',
      people: 'userId',
      pins: 'userId',
      settings: 'key',
      sites: 'id',
    });
    this.version(3).stores({
      tablet: 'key',
      people: 'userId',
      pins: 'userId',
      settings: 'key',
      sites: 'id',
      colleagues: 'id',
    });
  }
}
