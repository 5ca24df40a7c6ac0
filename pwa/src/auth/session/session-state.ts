// The session store's state in memory, shared by its parts (tokens, tablet lifecycle, the
// facade): the auth database, the clock, the people signed in here and who is using the tablet,
// and the snapshot listeners. The PIN lock keeps its own state (pin-lock.ts).
import type { SessionUser } from '@fuselight/shared';
import type {
  AuthDb,
  KnownColleague,
  KnownSite,
  PersonSession,
  TabletCredentials,
} from '../auth-db';
import type { OutboxCounter } from '../outbox-count';
import type { ErasureNote } from '../tablet-erasure';

/** The settings row naming who is using the tablet now. */
export const ACTIVE_KEY = 'activeUserId';

export class SessionState {
  db: AuthDb;
  tablet: TabletCredentials | null = null;
  people = new Map<string, PersonSession>();
  /** Outbox entries waiting per person who must sign in again. */
  waiting = new Map<string, number>();
  activeUserId: string | null = null;
  erasure: ErasureNote | null = null;
  retirement: { waitingChanges: number } | null = null;
  loaded = false;
  pinOfferFor: string | null = null;
  sites = new Map<string, KnownSite>();
  colleagues = new Map<string, KnownColleague>();

  constructor(
    readonly openDb: () => AuthDb,
    readonly now: () => number,
    readonly countOutbox: OutboxCounter,
    /** Rebuilds the snapshot and tells the listeners. */
    readonly publish: () => void,
  ) {
    this.db = openDb();
  }

  activePerson(): PersonSession | undefined {
    return this.activeUserId ? this.people.get(this.activeUserId) : undefined;
  }

  activeUser(): SessionUser | null {
    return this.activePerson()?.user ?? null;
  }

  /** Counts a person's Outbox entries for their sign-in prompt (unknown when it cannot). */
  async countWaiting(userId: string): Promise<void> {
    try {
      this.waiting.set(userId, await this.countOutbox(userId));
    } catch {
      this.waiting.delete(userId);
    }
  }
}
