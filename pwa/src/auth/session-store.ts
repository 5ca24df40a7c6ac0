// The tablet's identity state outside React: who has signed in here (each with their own tokens,
// so a shared tablet pushes every person's Outbox entries under that person's session), who is
// using it now, offline unlock by PIN, the enrolled tablet's credentials, and erasure when the
// clinic revokes or retires the tablet. Persisted in auth-db.ts; SessionProvider mirrors it.
//
// This file is the facade the app uses; the parts are in session/, each readable alone:
//   session/tokens.ts            access and refresh tokens per person, sign-in prompts
//   session/pin-lock.ts          PINs, wrong attempts and the offline unlock policy
//   session/tablet-lifecycle.ts  enrolment, retirement, heartbeat and erasure
//   session/session-state.ts     the state in memory the parts share
//   session/types.ts             the snapshot the screens read and the answers' types
import type { LoginRequest, SessionUser } from '@fuselight/shared';
import { AuthDb, type KnownColleague, type KnownSite } from './auth-db';
import { getAttachmentDb, SEALED_ATTACHMENT_TABLES } from '../attachments/attachment-db';
import { tabletVault } from '../data/crypto/data-key-vault';
import { webAuthnShare, type HardwareShare } from '../data/crypto/hardware-share';
import { KeyRing } from '../data/crypto/key-ring';
import { databaseMayExist, databaseMayHoldData } from '../data/database-exists';
import { DEFAULT_DB_NAME, getDefaultDb, SEALED_TABLES } from '../data/db';
import type { IdentityApi, SignInResponse } from './identity-api';
import { lazyIdentityApi } from './lazy-identity-api';
import { countOutboxEntries, type OutboxCounter } from './outbox-count';
import { PinLock } from './session/pin-lock';
import { ACTIVE_KEY, SessionState } from './session/session-state';
import { TabletLifecycle, type SiteScopeApplier } from './session/tablet-lifecycle';
import { SessionTokens, personFrom } from './session/tokens';
import {
  type AuthSnapshot,
  type KnownPerson,
  SignInRequiredError,
  type UnlockPolicy,
  type UnlockResult,
} from './session/types';
import { eraseAllDatabases, readErasureNote, type ErasureCause } from './tablet-erasure';

export {
  DEFAULT_UNLOCK_POLICY,
  SignInRequiredError,
  type AuthSnapshot,
  type KnownPerson,
  type SignInPrompt,
  type UnlockPolicy,
  type UnlockResult,
} from './session/types';

export interface SessionStoreOptions {
  api?: IdentityApi;
  db?: () => AuthDb;
  now?: () => number;
  countOutbox?: OutboxCounter;
  eraseDatabases?: () => Promise<unknown>;
  /** The tablet's key slots (default: on the tablet's records and attachments databases). */
  keyRing?: KeyRing;
  /** Deletes what the tablet holds of sites it no longer serves (default: its own databases). */
  applySiteScope?: SiteScopeApplier;
  /** The platform authenticator for the default key ring (default: the browser's WebAuthn). */
  hardware?: HardwareShare;
}

/** The tablet's own site scope: records and attachment files outside the sites it may hold go. */
export const tabletSiteScope: SiteScopeApplier = async (holdSiteIds, siteName) => {
  const db = getDefaultDb();
  // Locked: nothing sealed can be read; the next contact while someone is unlocked does it.
  if (db.vault.isProtected && !db.vault.unlocked) return;
  // Loaded at the first contact with the server, not with the first screen.
  const { applySiteScope } = await import('../data/site-scope');
  await applySiteScope({
    db,
    files: getAttachmentDb(),
    holdSiteIds,
    siteName,
    nowMs: Date.now(),
    onSiteRegained: async () => {
      const { beginFullRepull } = await import('../sync/full-repull');
      await beginFullRepull(db, 'site-returned', Date.now());
    },
  });
};

/** The key ring of this tablet's own databases. */
export function tabletKeyRing(hardware: HardwareShare = webAuthnShare()): KeyRing {
  return new KeyRing({
    hardware,
    db: getDefaultDb,
    mayHoldSlots: () => databaseMayExist(DEFAULT_DB_NAME),
    sealed: () => [
      { db: getDefaultDb(), tables: Object.keys(SEALED_TABLES) },
      { db: getAttachmentDb(), tables: Object.keys(SEALED_ATTACHMENT_TABLES) },
    ],
    vault: tabletVault,
  });
}

export class SessionStore {
  readonly api: IdentityApi;
  readonly keyRing: KeyRing;
  private readonly state: SessionState;
  private readonly pinLock: PinLock;
  private readonly tokens: SessionTokens;
  private readonly lifecycle: TabletLifecycle;
  private readonly listeners = new Set<() => void>();
  private snapshot: AuthSnapshot;

  constructor(options: SessionStoreOptions = {}) {
    this.api = options.api ?? lazyIdentityApi();
    this.keyRing = options.keyRing ?? tabletKeyRing(options.hardware);
    const now = options.now ?? (() => Date.now());
    this.state = new SessionState(
      options.db ?? (() => new AuthDb()),
      now,
      options.countOutbox ?? countOutboxEntries,
      () => this.publish(),
    );
    this.pinLock = new PinLock({
      db: () => this.state.db,
      now,
      publish: () => this.publish(),
      keys: this.keyRing,
    });
    this.lifecycle = new TabletLifecycle(
      this.state,
      this.api,
      this.pinLock,
      () => this.tokens,
      options.eraseDatabases ?? eraseAllDatabases,
      this.keyRing,
      options.applySiteScope ?? tabletSiteScope,
    );
    this.tokens = new SessionTokens(this.state, this.api, (error) =>
      this.lifecycle.eraseIfTold(error),
    );
    this.snapshot = this.build();
  }

  // ---- subscription (useSyncExternalStore) -------------------------------------------------

  subscribe = (listener: () => void): (() => void) => {
    this.listeners.add(listener);
    return () => this.listeners.delete(listener);
  };

  getSnapshot = (): AuthSnapshot => this.snapshot;

  private publish(): void {
    this.snapshot = this.build();
    for (const listener of this.listeners) listener();
  }

  private build(): AuthSnapshot {
    const state = this.state;
    const people = [...state.people.values()]
      .sort((a, b) => a.user.name.localeCompare(b.user.name))
      .map((person): KnownPerson => ({
        user: person.user,
        ...this.pinLock.status(person, !!state.tablet),
        signInRequired: person.signInRequired,
      }));
    const active = state.activePerson();
    return {
      loaded: state.loaded,
      tablet: state.tablet ? { deviceId: state.tablet.deviceId, state: state.tablet.state } : null,
      people,
      activeUser: active?.user ?? null,
      activeSiteId: active?.activeSiteId ?? null,
      prompts: [...state.people.values()]
        .filter((p) => p.signInRequired)
        .map((p) => ({
          userId: p.userId,
          name: p.user.name,
          email: p.user.email,
          reason: p.signInRequired!.reason,
          waitingChanges: state.waiting.get(p.userId) ?? 0,
        })),
      erasure: state.erasure,
      retirement: state.retirement,
      policy: this.pinLock.policy,
      pinOfferFor: state.pinOfferFor,
      sites: Object.fromEntries(state.sites),
      colleagues: Object.fromEntries(state.colleagues),
    };
  }

  // ---- loading -----------------------------------------------------------------------------

  async load(): Promise<void> {
    const state = this.state;
    state.erasure = readErasureNote();
    const db = state.db;
    // A tablet that was never enrolled nor signed in on has no session database, and reading it
    // would create it: every table, on the first visit's sign-in screen. Its first write
    // (enrolment, sign-in) creates it instead.
    const held = await databaseMayHoldData(db);
    const [tablet, people, active, sites, colleagues] = await Promise.all([
      held ? db.tablet.get('tablet') : undefined,
      held ? db.people.toArray() : [],
      held ? db.settings.get(ACTIVE_KEY) : undefined,
      held ? db.sites.toArray() : [],
      held ? db.colleagues.toArray() : [],
      held ? this.pinLock.load() : undefined,
      this.keyRing.load(),
    ]);
    state.sites = new Map(sites.map((site) => [site.id, site]));
    state.colleagues = new Map(colleagues.map((person) => [person.id, person]));
    state.tablet = tablet ?? null;
    state.people = new Map(people.map((p) => [p.userId, p]));
    const activeId = typeof active?.value === 'string' ? active.value : null;
    // A protected tablet starts locked: the data key is in no one's memory after a reload.
    const locked = this.keyRing.vault.isProtected && !this.keyRing.vault.unlocked;
    state.activeUserId = activeId && state.people.has(activeId) && !locked ? activeId : null;
    for (const person of people) if (person.signInRequired) await state.countWaiting(person.userId);
    state.loaded = true;
    this.publish();
  }

  // ---- enrolment ---------------------------------------------------------------------------

  enrol(code: string): Promise<void> {
    return this.lifecycle.enrol(code);
  }

  // ---- signing in and out ------------------------------------------------------------------

  /** A full online sign-in. On an enrolled tablet the session is bound to the tablet. */
  async signIn(credentials: Pick<LoginRequest, 'email' | 'password'>): Promise<SessionUser> {
    const state = this.state;
    let answer: SignInResponse;
    try {
      answer = await this.api.signIn({
        email: credentials.email,
        password: credentials.password,
        ...(state.tablet ? { deviceSecret: state.tablet.deviceSecret } : {}),
      });
    } catch (error) {
      await this.lifecycle.eraseIfTold(error);
      throw error;
    }
    const previous = state.people.get(answer.user.id);
    const person = personFrom(answer, previous?.activeSiteId ?? null, state.now());
    const db = state.db;
    await db.transaction('rw', db.people, db.pins, db.settings, async () => {
      await db.people.put(person);
      await db.settings.put({ key: ACTIVE_KEY, value: person.userId });
      // A full sign-in proves the person again: wrong PIN attempts start from nothing.
      await this.pinLock.writeAttemptsCleared(person.userId);
    });
    state.people.set(person.userId, person);
    this.pinLock.noteAttemptsCleared(person.userId);
    state.waiting.delete(person.userId);
    state.activeUserId = person.userId;
    await this.openKeyAfterSignIn(answer.accessToken);
    // Offered a PIN: someone without one, or whose PIN's screen-lock key did not answer.
    state.pinOfferFor =
      state.tablet &&
      (!this.pinLock.hasPin(person.userId) || this.pinLock.hardwareRefused(person.userId))
        ? person.userId
        : null;
    this.publish();
    // The names are for showing only: the sign-in never waits for them or fails with them.
    this.refreshSites().catch(() => undefined);
    return person.user;
  }

  /**
   * Ends the active person's session on this tablet. Their Outbox entries are never touched: if
   * some are still waiting, the person stays listed with a sign-in prompt so they get sent.
   */
  async signOut(): Promise<void> {
    const state = this.state;
    const person = state.activePerson();
    if (!person) return;
    if (person.accessToken && person.accessExpiresAt > state.now()) {
      try {
        await this.api.signOut(person.accessToken);
      } catch {
        // Offline or already ended: the tokens are forgotten here either way.
      }
    }
    const waiting = await state.countOutbox(person.userId);
    const db = state.db;
    await db.transaction('rw', db.people, db.pins, db.settings, async () => {
      await this.pinLock.writeRemoved(person.userId);
      await db.settings.delete(ACTIVE_KEY);
      if (waiting > 0) {
        await db.people.put({
          ...person,
          accessToken: null,
          refreshToken: null,
          accessExpiresAt: 0,
          signInRequired: { reason: 'Signed out before every change was sent.', at: state.now() },
        });
      } else {
        await db.people.delete(person.userId);
      }
    });
    await this.pinLock.noteRemoved(person.userId);
    this.keyRing.lock();
    if (waiting > 0) {
      state.people.set(person.userId, (await db.people.get(person.userId))!);
      state.waiting.set(person.userId, waiting);
    } else {
      state.people.delete(person.userId);
    }
    state.activeUserId = null;
    this.publish();
  }

  /**
   * After an online sign-in on an enrolled tablet: the server's share makes the tablet's data
   * key (first sign-in), opens it when locked (a person new to this tablet, or one who typed too
   * many wrong PINs), and is kept as a slot of its own when unlocked. Offline, or on a server
   * without the share, nothing changes: the PIN of someone who has one still unlocks.
   */
  private async openKeyAfterSignIn(token: string | null): Promise<void> {
    if (!this.state.tablet || !token) return;
    try {
      await this.keyRing.useServerShare(await this.api.keyShare(token));
    } catch (error) {
      await this.lifecycle.eraseIfTold(error);
    }
  }

  /**
   * Locks the tablet (idle, hidden for long, or asked): the data key and every plain value held
   * in memory are dropped, and the unlock screen shows nothing clinical. Sessions, Outbox entries
   * and everything stored stay; the PIN (or an online sign-in) unlocks again.
   */
  lock(): void {
    if (!this.keyRing.vault.isProtected) return;
    this.keyRing.lock();
    this.state.activeUserId = null;
    this.state.pinOfferFor = null;
    this.publish();
  }

  /** The person chose not to set a PIN now. */
  declinePin(): void {
    this.state.pinOfferFor = null;
    this.publish();
  }

  /** Hands the tablet to someone else: the current person is locked out, their session kept. */
  async switchPerson(): Promise<void> {
    this.state.activeUserId = null;
    this.state.pinOfferFor = null;
    await this.state.db.settings.delete(ACTIVE_KEY);
    this.keyRing.lock();
    this.publish();
  }

  async setActiveSite(siteId: string): Promise<void> {
    const person = this.state.activePerson();
    if (!person) throw new SignInRequiredError('Nobody is signed in on this tablet.');
    if (!person.user.siteIds.includes(siteId)) {
      throw new Error('That site is not one of yours on this tablet.');
    }
    const next = { ...person, activeSiteId: siteId };
    await this.state.db.people.put(next);
    this.state.people.set(next.userId, next);
    this.publish();
  }

  async setPolicy(policy: Partial<UnlockPolicy>): Promise<void> {
    await this.pinLock.setPolicy(policy);
    this.publish();
  }

  // ---- offline unlock ----------------------------------------------------------------------

  /** Sets the active person's PIN (after an online sign-in on an enrolled tablet). */
  async setPin(pin: string): Promise<void> {
    const person = this.state.activePerson();
    if (!person) throw new SignInRequiredError('Sign in before setting a PIN.');
    if (!this.state.tablet)
      throw new Error('A PIN unlocks an enrolled tablet only; enrol it first.');
    await this.pinLock.setPin(person.userId, pin, {
      name: person.user.name,
      email: person.user.email,
    });
    this.state.pinOfferFor = null;
    this.publish();
    // Keep the key under the server's share too (if the PIN made it), so that an online sign-in
    // can always open it (another person, or too many wrong PINs).
    await this.openKeyAfterSignIn(await this.tokens.tokenFor(person.userId));
  }

  /** Whether a PIN set here is combined with the tablet's platform authenticator. */
  hardwareKeyAvailable(): Promise<boolean> {
    return this.keyRing.hardwareAvailable();
  }

  /** What `secret` still lacks under the clinic's rule for this tablet; null when it may be set. */
  pinShortfall(secret: string): Promise<string | null> {
    return this.pinLock.shortfall(secret);
  }

  async unlock(userId: string, pin: string): Promise<UnlockResult> {
    const state = this.state;
    const result = await this.pinLock.check(userId, state.people.get(userId), pin, !!state.tablet);
    if (!result.ok) return result;
    await state.db.settings.put({ key: ACTIVE_KEY, value: userId });
    state.activeUserId = userId;
    this.publish();
    this.refreshSites().catch(() => undefined);
    // Online, a tablet whose key has no server slot yet (sealed before the server gave shares)
    // gets one; offline this waits for the next unlock.
    this.tokens
      .tokenFor(userId)
      .then((token) => this.openKeyAfterSignIn(token))
      .catch(() => undefined);
    return result;
  }

  // ---- site names ---------------------------------------------------------------------------

  /**
   * Asks the server for the active person's sites and colleagues and keeps their names (and the
   * sites' addresses). Offline, or refused, the names last fetched stay (a person's sites come
   * from their session, not from this list). Each answer is kept on its own: an older server
   * without the colleagues route still names the sites.
   */
  async refreshSites(): Promise<void> {
    const state = this.state;
    const userId = state.activeUserId;
    if (!userId) return;
    const token = await this.tokens.tokenFor(userId);
    if (!token) return;
    let answer: Awaited<ReturnType<IdentityApi['mySites']>>;
    try {
      answer = await this.api.mySites(token);
    } catch (error) {
      await this.lifecycle.eraseIfTold(error);
      return;
    }
    const fetchedAt = state.now();
    const known = answer.map((site): KnownSite => ({ ...site, fetchedAt }));
    await state.db.sites.bulkPut(known);
    for (const site of known) state.sites.set(site.id, site);
    this.publish();

    let people: Awaited<ReturnType<IdentityApi['colleagues']>>;
    try {
      people = await this.api.colleagues(token);
    } catch (error) {
      await this.lifecycle.eraseIfTold(error);
      return;
    }
    const colleagues = people.map((person): KnownColleague => ({ ...person, fetchedAt }));
    await state.db.colleagues.bulkPut(colleagues);
    for (const person of colleagues) state.colleagues.set(person.id, person);
    this.publish();
  }

  // ---- tokens (the sync seam and server calls): session/tokens.ts ---------------------------

  /** A usable access token for `userId`, refreshed when due; null when none can be had now. */
  tokenFor(userId: string): Promise<string | null> {
    return this.tokens.tokenFor(userId);
  }

  /** The server refused `userId`'s access token: try one refresh, else ask them to sign in. */
  handleUnauthorized(userId: string): Promise<void> {
    return this.tokens.handleUnauthorized(userId);
  }

  /** Runs a server call as the active person, refreshing once if the token is refused. */
  asActivePerson<T>(call: (token: string) => Promise<T>): Promise<T> {
    return this.tokens.asActivePerson(call);
  }

  // ---- the tablet's standing with the server: session/tablet-lifecycle.ts -----------------

  /** Asks the server about this tablet; a retired tablet starts emptying its Outbox. */
  checkTablet(): Promise<void> {
    return this.lifecycle.checkTablet();
  }

  /** An enrolled tablet never asked for persistent storage (enrolled earlier) is asked now. */
  askForPersistentStorageOnce(): Promise<void> {
    return this.lifecycle.askForPersistentStorageOnce();
  }

  /** A retired tablet erases itself once nothing is left to send. */
  continueRetirement(): Promise<void> {
    return this.lifecycle.continueRetirement();
  }

  heartbeat(appVersion: string): Promise<void> {
    return this.lifecycle.heartbeat(appVersion);
  }

  /** True (after erasing) when `error` is the server telling a revoked tablet to erase. */
  eraseIfTold(error: unknown): Promise<boolean> {
    return this.lifecycle.eraseIfTold(error);
  }

  erase(cause: ErasureCause, message: string): Promise<void> {
    return this.lifecycle.erase(cause, message);
  }

  /** After reading why the tablet was erased, the person may enrol it again. */
  dismissErasure(): void {
    this.lifecycle.dismissErasure();
  }
}
