// The tablet's identity state outside React: who has signed in here (each with their own tokens,
// so a shared tablet pushes every person's Outbox entries under that person's session), who is
// using it now, offline unlock by PIN, the enrolled tablet's credentials, and erasure when the
// clinic revokes or retires the tablet. Persisted in auth-db.ts; SessionProvider mirrors it.
import type { LoginRequest, SessionUser } from '@fuselight/shared';
import {
  AuthDb,
  type KnownColleague,
  type KnownSite,
  type PersonSession,
  type PinRecord,
  type TabletCredentials,
} from './auth-db';
import {
  ApiError,
  IdentityApi,
  NetworkError,
  tokenExpiry,
  type SignInResponse,
} from './identity-api';
import { countOutboxEntries, type OutboxCounter } from './outbox-count';
import { PIN_HASH_ITERATIONS, hashPin, pinSchema, verifyPin } from './pin-hash';
import {
  clearErasureNote,
  eraseAllDatabases,
  readErasureNote,
  writeErasureNote,
  type ErasureCause,
  type ErasureNote,
} from './tablet-erasure';

export interface UnlockPolicy {
  /** How long after the server last confirmed a person their PIN still unlocks offline. */
  offlineUnlockHours: number;
  /** Wrong PINs allowed before a full online sign-in is required. */
  maxPinAttempts: number;
}
export const DEFAULT_UNLOCK_POLICY: UnlockPolicy = { offlineUnlockHours: 72, maxPinAttempts: 5 };

/** Refresh this long before the access token's own expiry, so a push never starts on a dying one. */
const EXPIRY_MARGIN_MS = 30_000;
/** Used when an access token carries no readable `exp`. */
const FALLBACK_ACCESS_TTL_MS = 5 * 60_000;

export interface KnownPerson {
  user: SessionUser;
  hasPin: boolean;
  pinAttemptsLeft: number;
  /** A PIN is set, attempts remain and the offline window is open. */
  canUnlockWithPin: boolean;
  /** Epoch ms after which the PIN no longer unlocks (the window closes). */
  unlockWindowEndsAt: number;
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
      reason: 'wrong-pin' | 'locked-out' | 'window-closed' | 'no-pin' | 'not-enrolled';
      message: string;
      attemptsLeft: number;
    };

export interface SessionStoreOptions {
  api?: IdentityApi;
  db?: () => AuthDb;
  now?: () => number;
  countOutbox?: OutboxCounter;
  eraseDatabases?: () => Promise<unknown>;
  pinIterations?: number;
}

export class SignInRequiredError extends Error {
  constructor(message = 'Sign in again to continue.') {
    super(message);
    this.name = 'SignInRequiredError';
  }
}

const ACTIVE_KEY = 'activeUserId';
const POLICY_KEY = 'unlockPolicy';

export class SessionStore {
  readonly api: IdentityApi;
  private readonly openDb: () => AuthDb;
  private db: AuthDb;
  private readonly now: () => number;
  private readonly countOutbox: OutboxCounter;
  private readonly eraseDatabases: () => Promise<unknown>;
  private readonly pinIterations: number;

  private tablet: TabletCredentials | null = null;
  private people = new Map<string, PersonSession>();
  private pins = new Map<string, PinRecord>();
  private waiting = new Map<string, number>();
  private activeUserId: string | null = null;
  private policy: UnlockPolicy = DEFAULT_UNLOCK_POLICY;
  private erasure: ErasureNote | null = null;
  private retirement: { waitingChanges: number } | null = null;
  private loaded = false;
  private pinOfferFor: string | null = null;
  private sites = new Map<string, KnownSite>();
  private colleagues = new Map<string, KnownColleague>();
  private erasing: Promise<void> | null = null;
  private readonly refreshing = new Map<string, Promise<string | null>>();
  private readonly listeners = new Set<() => void>();
  private snapshot: AuthSnapshot;

  constructor(options: SessionStoreOptions = {}) {
    this.api = options.api ?? new IdentityApi();
    this.openDb = options.db ?? (() => new AuthDb());
    this.db = this.openDb();
    this.now = options.now ?? (() => Date.now());
    this.countOutbox = options.countOutbox ?? countOutboxEntries;
    this.eraseDatabases = options.eraseDatabases ?? eraseAllDatabases;
    this.pinIterations = options.pinIterations ?? PIN_HASH_ITERATIONS;
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
    const now = this.now();
    const people = [...this.people.values()]
      .sort((a, b) => a.user.name.localeCompare(b.user.name))
      .map((person): KnownPerson => {
        const pin = this.pins.get(person.userId);
        const attemptsLeft = pin ? Math.max(0, this.policy.maxPinAttempts - pin.failedAttempts) : 0;
        const windowEnds = person.confirmedAt + this.policy.offlineUnlockHours * 3_600_000;
        return {
          user: person.user,
          hasPin: !!pin,
          pinAttemptsLeft: attemptsLeft,
          canUnlockWithPin:
            !!pin &&
            attemptsLeft > 0 &&
            now <= windowEnds &&
            !person.signInRequired &&
            !!this.tablet,
          unlockWindowEndsAt: windowEnds,
          signInRequired: person.signInRequired,
        };
      });
    const active = this.activeUserId ? this.people.get(this.activeUserId) : undefined;
    return {
      loaded: this.loaded,
      tablet: this.tablet ? { deviceId: this.tablet.deviceId, state: this.tablet.state } : null,
      people,
      activeUser: active?.user ?? null,
      activeSiteId: active?.activeSiteId ?? null,
      prompts: [...this.people.values()]
        .filter((p) => p.signInRequired)
        .map((p) => ({
          userId: p.userId,
          name: p.user.name,
          email: p.user.email,
          reason: p.signInRequired!.reason,
          waitingChanges: this.waiting.get(p.userId) ?? 0,
        })),
      erasure: this.erasure,
      retirement: this.retirement,
      policy: this.policy,
      pinOfferFor: this.pinOfferFor,
      sites: Object.fromEntries(this.sites),
      colleagues: Object.fromEntries(this.colleagues),
    };
  }

  // ---- loading -----------------------------------------------------------------------------

  async load(): Promise<void> {
    this.erasure = readErasureNote();
    const [tablet, people, pins, active, policy, sites, colleagues] = await Promise.all([
      this.db.tablet.get('tablet'),
      this.db.people.toArray(),
      this.db.pins.toArray(),
      this.db.settings.get(ACTIVE_KEY),
      this.db.settings.get(POLICY_KEY),
      this.db.sites.toArray(),
      this.db.colleagues.toArray(),
    ]);
    this.sites = new Map(sites.map((site) => [site.id, site]));
    this.colleagues = new Map(colleagues.map((person) => [person.id, person]));
    this.tablet = tablet ?? null;
    this.people = new Map(people.map((p) => [p.userId, p]));
    this.pins = new Map(pins.map((p) => [p.userId, p]));
    const activeId = typeof active?.value === 'string' ? active.value : null;
    this.activeUserId = activeId && this.people.has(activeId) ? activeId : null;
    if (policy?.value)
      this.policy = { ...DEFAULT_UNLOCK_POLICY, ...(policy.value as UnlockPolicy) };
    for (const person of people) if (person.signInRequired) await this.countWaiting(person.userId);
    this.loaded = true;
    this.publish();
  }

  // ---- enrolment ---------------------------------------------------------------------------

  async enrol(code: string): Promise<void> {
    const answer = await this.api.enrol(code.trim().toUpperCase());
    const tablet: TabletCredentials = {
      key: 'tablet',
      deviceId: answer.deviceId,
      deviceSecret: answer.deviceSecret,
      enrolledAt: this.now(),
      state: 'active',
    };
    await this.db.tablet.put(tablet);
    this.tablet = tablet;
    this.erasure = null;
    clearErasureNote();
    this.publish();
  }

  // ---- signing in and out ------------------------------------------------------------------

  /** A full online sign-in. On an enrolled tablet the session is bound to the tablet. */
  async signIn(credentials: Pick<LoginRequest, 'email' | 'password'>): Promise<SessionUser> {
    let answer: SignInResponse;
    try {
      answer = await this.api.signIn({
        email: credentials.email,
        password: credentials.password,
        ...(this.tablet ? { deviceSecret: this.tablet.deviceSecret } : {}),
      });
    } catch (error) {
      await this.eraseIfTold(error);
      throw error;
    }
    const previous = this.people.get(answer.user.id);
    const person = this.personFrom(answer, previous?.activeSiteId ?? null);
    await this.db.transaction('rw', this.db.people, this.db.pins, this.db.settings, async () => {
      await this.db.people.put(person);
      await this.db.settings.put({ key: ACTIVE_KEY, value: person.userId });
      // A full sign-in proves the person again: wrong PIN attempts start from nothing.
      await this.db.pins.update(person.userId, { failedAttempts: 0 });
    });
    this.people.set(person.userId, person);
    const pin = this.pins.get(person.userId);
    if (pin) this.pins.set(person.userId, { ...pin, failedAttempts: 0 });
    this.waiting.delete(person.userId);
    this.activeUserId = person.userId;
    this.pinOfferFor = this.tablet && !pin ? person.userId : null;
    this.publish();
    // The names are for showing only: the sign-in never waits for them or fails with them.
    this.refreshSites().catch(() => undefined);
    return person.user;
  }

  private personFrom(answer: SignInResponse, siteWanted: string | null): PersonSession {
    const now = this.now();
    return {
      userId: answer.user.id,
      user: answer.user,
      accessToken: answer.accessToken,
      accessExpiresAt: tokenExpiry(answer.accessToken) ?? now + FALLBACK_ACCESS_TTL_MS,
      refreshToken: answer.refreshToken,
      confirmedAt: now,
      signInRequired: null,
      activeSiteId:
        siteWanted && answer.user.siteIds.includes(siteWanted)
          ? siteWanted
          : (answer.user.siteIds[0] ?? null),
    };
  }

  /**
   * Ends the active person's session on this tablet. Their Outbox entries are never touched: if
   * some are still waiting, the person stays listed with a sign-in prompt so they get sent.
   */
  async signOut(): Promise<void> {
    const person = this.activeUserId ? this.people.get(this.activeUserId) : undefined;
    if (!person) return;
    if (person.accessToken && person.accessExpiresAt > this.now()) {
      try {
        await this.api.signOut(person.accessToken);
      } catch {
        // Offline or already ended: the tokens are forgotten here either way.
      }
    }
    const waiting = await this.countOutbox(person.userId);
    await this.db.transaction('rw', this.db.people, this.db.pins, this.db.settings, async () => {
      await this.db.pins.delete(person.userId);
      await this.db.settings.delete(ACTIVE_KEY);
      if (waiting > 0) {
        await this.db.people.put({
          ...person,
          accessToken: null,
          refreshToken: null,
          accessExpiresAt: 0,
          signInRequired: { reason: 'Signed out before every change was sent.', at: this.now() },
        });
      } else {
        await this.db.people.delete(person.userId);
      }
    });
    this.pins.delete(person.userId);
    if (waiting > 0) {
      this.people.set(person.userId, (await this.db.people.get(person.userId))!);
      this.waiting.set(person.userId, waiting);
    } else {
      this.people.delete(person.userId);
    }
    this.activeUserId = null;
    this.publish();
  }

  /** The person chose not to set a PIN now. */
  declinePin(): void {
    this.pinOfferFor = null;
    this.publish();
  }

  /** Hands the tablet to someone else: the current person is locked out, their session kept. */
  async switchPerson(): Promise<void> {
    this.activeUserId = null;
    this.pinOfferFor = null;
    await this.db.settings.delete(ACTIVE_KEY);
    this.publish();
  }

  async setActiveSite(siteId: string): Promise<void> {
    const person = this.activeUserId ? this.people.get(this.activeUserId) : undefined;
    if (!person) throw new SignInRequiredError('Nobody is signed in on this tablet.');
    if (!person.user.siteIds.includes(siteId)) {
      throw new Error('That site is not one of yours on this tablet.');
    }
    const next = { ...person, activeSiteId: siteId };
    await this.db.people.put(next);
    this.people.set(next.userId, next);
    this.publish();
  }

  async setPolicy(policy: Partial<UnlockPolicy>): Promise<void> {
    const next = { ...this.policy };
    if (policy.offlineUnlockHours !== undefined && policy.offlineUnlockHours > 0) {
      next.offlineUnlockHours = policy.offlineUnlockHours;
    }
    if (policy.maxPinAttempts !== undefined && policy.maxPinAttempts >= 1) {
      next.maxPinAttempts = Math.floor(policy.maxPinAttempts);
    }
    this.policy = next;
    await this.db.settings.put({ key: POLICY_KEY, value: next });
    this.publish();
  }

  // ---- offline unlock ----------------------------------------------------------------------

  /** Sets the active person's PIN (after an online sign-in on an enrolled tablet). */
  async setPin(pin: string): Promise<void> {
    const person = this.activeUserId ? this.people.get(this.activeUserId) : undefined;
    if (!person) throw new SignInRequiredError('Sign in before setting a PIN.');
    if (!this.tablet) throw new Error('A PIN unlocks an enrolled tablet only; enrol it first.');
    pinSchema.parse(pin);
    const hashed = await hashPin(pin, this.pinIterations);
    const record: PinRecord = {
      userId: person.userId,
      ...hashed,
      failedAttempts: 0,
      setAt: this.now(),
    };
    await this.db.pins.put(record);
    this.pins.set(person.userId, record);
    this.pinOfferFor = null;
    this.publish();
  }

  async unlock(userId: string, pin: string): Promise<UnlockResult> {
    const person = this.people.get(userId);
    const record = this.pins.get(userId);
    const { maxPinAttempts, offlineUnlockHours } = this.policy;
    if (!this.tablet) {
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
    if (this.now() > person.confirmedAt + offlineUnlockHours * 3_600_000) {
      this.publish();
      return fail(
        'window-closed',
        `Your PIN unlocks this tablet for ${offlineUnlockHours} hours after the clinic server last saw you. Sign in with your password while online.`,
        maxPinAttempts - record.failedAttempts,
      );
    }
    if (!(await verifyPin(pin, record))) {
      const failedAttempts = record.failedAttempts + 1;
      await this.db.pins.update(userId, { failedAttempts });
      this.pins.set(userId, { ...record, failedAttempts });
      this.publish();
      const left = Math.max(0, maxPinAttempts - failedAttempts);
      return left === 0
        ? fail('locked-out', 'Too many wrong PINs. Sign in with your password while online.', 0)
        : fail(
            'wrong-pin',
            `That PIN is not right. ${left} attempt${left === 1 ? '' : 's'} left.`,
            left,
          );
    }
    await this.db.pins.update(userId, { failedAttempts: 0 });
    await this.db.settings.put({ key: ACTIVE_KEY, value: userId });
    this.pins.set(userId, { ...record, failedAttempts: 0 });
    this.activeUserId = userId;
    this.publish();
    this.refreshSites().catch(() => undefined);
    return { ok: true };
  }

  // ---- site names ---------------------------------------------------------------------------

  /**
   * Asks the server for the active person's sites and colleagues and keeps their names (and the
   * sites' addresses). Offline, or refused, the names last fetched stay (a person's sites come
   * from their session, not from this list). Each answer is kept on its own: an older server
   * without the colleagues route still names the sites.
   */
  async refreshSites(): Promise<void> {
    const userId = this.activeUserId;
    if (!userId) return;
    const token = await this.tokenFor(userId);
    if (!token) return;
    let answer: Awaited<ReturnType<IdentityApi['mySites']>>;
    try {
      answer = await this.api.mySites(token);
    } catch (error) {
      await this.eraseIfTold(error);
      return;
    }
    const fetchedAt = this.now();
    const known = answer.map((site): KnownSite => ({ ...site, fetchedAt }));
    await this.db.sites.bulkPut(known);
    for (const site of known) this.sites.set(site.id, site);
    this.publish();

    let people: Awaited<ReturnType<IdentityApi['colleagues']>>;
    try {
      people = await this.api.colleagues(token);
    } catch (error) {
      await this.eraseIfTold(error);
      return;
    }
    const colleagues = people.map((person): KnownColleague => ({ ...person, fetchedAt }));
    await this.db.colleagues.bulkPut(colleagues);
    for (const person of colleagues) this.colleagues.set(person.id, person);
    this.publish();
  }

  // ---- tokens (the sync seam and server calls) ---------------------------------------------

  /** A usable access token for `userId`, refreshed when due; null when none can be had now. */
  async tokenFor(userId: string): Promise<string | null> {
    const person = this.people.get(userId);
    if (!person || person.signInRequired) return null;
    if (person.accessToken && person.accessExpiresAt - EXPIRY_MARGIN_MS > this.now()) {
      return person.accessToken;
    }
    return this.refreshFor(userId);
  }

  /** The server refused `userId`'s access token: try one refresh, else ask them to sign in. */
  async handleUnauthorized(userId: string): Promise<void> {
    const person = this.people.get(userId);
    if (!person || person.signInRequired) {
      if (person) await this.requireSignIn(userId, person.signInRequired!.reason);
      return;
    }
    const spent = { ...person, accessToken: null, accessExpiresAt: 0 };
    this.people.set(userId, spent);
    await this.db.people.put(spent);
    await this.refreshFor(userId);
  }

  /** One refresh at a time per person: refresh tokens rotate, and reusing one ends the family. */
  private refreshFor(userId: string): Promise<string | null> {
    const running = this.refreshing.get(userId);
    if (running) return running;
    const attempt = this.doRefresh(userId).finally(() => this.refreshing.delete(userId));
    this.refreshing.set(userId, attempt);
    return attempt;
  }

  private async doRefresh(userId: string): Promise<string | null> {
    const person = this.people.get(userId);
    if (!person?.refreshToken) {
      if (person) await this.requireSignIn(userId, 'Your session on this tablet has ended.');
      return null;
    }
    try {
      const answer = await this.api.refresh(person.refreshToken);
      const next = { ...this.personFrom(answer, person.activeSiteId) };
      await this.db.people.put(next);
      this.people.set(userId, next);
      this.publish();
      return next.accessToken;
    } catch (error) {
      if (await this.eraseIfTold(error)) return null;
      if (error instanceof ApiError && [400, 401, 403, 404].includes(error.status)) {
        await this.requireSignIn(userId, error.message);
      }
      // Offline or a server fault: keep everything, try again on the next sync.
      return null;
    }
  }

  private async requireSignIn(userId: string, reason: string): Promise<void> {
    const person = this.people.get(userId);
    if (!person) return;
    const next: PersonSession = {
      ...person,
      accessToken: null,
      accessExpiresAt: 0,
      refreshToken: null,
      signInRequired: person.signInRequired ?? { reason, at: this.now() },
    };
    await this.db.people.put(next);
    this.people.set(userId, next);
    await this.countWaiting(userId);
    this.publish();
  }

  private async countWaiting(userId: string): Promise<void> {
    try {
      this.waiting.set(userId, await this.countOutbox(userId));
    } catch {
      this.waiting.delete(userId);
    }
  }

  /** Runs a server call as the active person, refreshing once if the token is refused. */
  async asActivePerson<T>(call: (token: string) => Promise<T>): Promise<T> {
    const userId = this.activeUserId;
    if (!userId) throw new SignInRequiredError('Nobody is signed in on this tablet.');
    const token = await this.tokenFor(userId);
    if (!token) throw new SignInRequiredError();
    try {
      return await call(token);
    } catch (error) {
      if (await this.eraseIfTold(error)) throw error;
      if (!(error instanceof ApiError) || error.status !== 401) throw error;
      await this.handleUnauthorized(userId);
      const again = await this.tokenFor(userId);
      if (!again) throw new SignInRequiredError();
      return call(again);
    }
  }

  /** Any person's usable token, for tablet-level calls (status, heartbeat). */
  private async anyToken(): Promise<string | null> {
    const order = [this.activeUserId, ...this.people.keys()].filter((id): id is string => !!id);
    for (const userId of new Set(order)) {
      const token = await this.tokenFor(userId);
      if (token) return token;
    }
    return null;
  }

  // ---- the tablet's standing with the server ----------------------------------------------

  /** Asks the server about this tablet; a retired tablet starts emptying its Outbox. */
  async checkTablet(): Promise<void> {
    if (!this.tablet) return;
    const token = await this.anyToken();
    if (!token) return;
    try {
      const status = await this.api.deviceStatus(token);
      if (status.offlineUnlockHours !== undefined || status.maxPinAttempts !== undefined) {
        await this.setPolicy({
          offlineUnlockHours: status.offlineUnlockHours,
          maxPinAttempts: status.maxPinAttempts,
        });
      }
      if (status.state === 'retired' && this.tablet.state !== 'retired') {
        const tablet = { ...this.tablet, state: 'retired' as const };
        await this.db.tablet.put(tablet);
        this.tablet = tablet;
        this.publish();
      }
    } catch (error) {
      await this.eraseIfTold(error);
      return;
    }
    if (this.tablet?.state === 'retired') await this.continueRetirement();
  }

  /** A retired tablet erases itself once nothing is left to send. */
  async continueRetirement(): Promise<void> {
    if (this.tablet?.state !== 'retired') return;
    const waitingChanges = await this.countOutbox();
    if (waitingChanges === 0) {
      await this.erase(
        'retired',
        'This tablet was retired by the clinic. Every change had been sent, and its data was then erased.',
      );
      return;
    }
    this.retirement = { waitingChanges };
    this.publish();
  }

  async heartbeat(appVersion: string): Promise<void> {
    if (!this.tablet) return;
    const token = await this.anyToken();
    if (!token) return;
    try {
      await this.api.heartbeat(token, { appVersion, outboxSize: await this.countOutbox() });
    } catch (error) {
      if (await this.eraseIfTold(error)) return;
      if (!(error instanceof NetworkError)) throw error;
    }
  }

  // ---- erasure -----------------------------------------------------------------------------

  /** True (after erasing) when `error` is the server telling a revoked tablet to erase. */
  async eraseIfTold(error: unknown): Promise<boolean> {
    if (!(error instanceof ApiError) || !error.erase) return false;
    await this.erase(
      'revoked',
      `${error.message} This tablet was revoked by the clinic, so every record on it has been erased.`,
    );
    return true;
  }

  erase(cause: ErasureCause, message: string): Promise<void> {
    this.erasing ??= this.doErase(cause, message).finally(() => {
      this.erasing = null;
    });
    return this.erasing;
  }

  private async doErase(cause: ErasureCause, message: string): Promise<void> {
    const note: ErasureNote = { cause, message, at: this.now() };
    this.db.close();
    await this.eraseDatabases();
    writeErasureNote(note);
    this.db = this.openDb();
    this.tablet = null;
    this.people.clear();
    this.pins.clear();
    this.sites.clear();
    this.colleagues.clear();
    this.waiting.clear();
    this.activeUserId = null;
    this.retirement = null;
    this.policy = DEFAULT_UNLOCK_POLICY;
    this.erasure = note;
    this.publish();
  }

  /** After reading why the tablet was erased, the person may enrol it again. */
  dismissErasure(): void {
    clearErasureNote();
    this.erasure = null;
    this.publish();
  }
}

function fail(
  reason: Exclude<UnlockResult, { ok: true }>['reason'],
  message: string,
  attemptsLeft: number,
): UnlockResult {
  return { ok: false, reason, message, attemptsLeft };
}
