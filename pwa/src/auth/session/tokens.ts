// Each signed-in person's tokens: a usable access token when a call needs one (refreshed shortly
// before it expires, one refresh at a time per person since refresh tokens rotate), and a
// sign-in prompt when the server will not refresh. Outbox entries are never touched here.
import type { PersonSession } from '../auth-db';
import { ApiError } from '../../net/api-client';
import type { IdentityApi, SignInResponse } from '../identity-api';
import { tokenExpiry } from './token-expiry';
import type { SessionState } from './session-state';
import { SignInRequiredError } from './types';

/** Refresh this long before the access token's own expiry, so a push never starts on a dying one. */
const EXPIRY_MARGIN_MS = 30_000;
/** Used when an access token carries no readable `exp`. */
const FALLBACK_ACCESS_TTL_MS = 5 * 60_000;

/** A person's session from the server's sign-in or refresh answer, keeping their site if allowed. */
export function personFrom(
  answer: SignInResponse,
  siteWanted: string | null,
  now: number,
): PersonSession {
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

export class SessionTokens {
  private readonly refreshing = new Map<string, Promise<string | null>>();

  constructor(
    private readonly state: SessionState,
    private readonly api: IdentityApi,
    /** True (after erasing) when an error is the server telling a revoked tablet to erase. */
    private readonly eraseIfTold: (error: unknown) => Promise<boolean>,
  ) {}

  /** A usable access token for `userId`, refreshed when due; null when none can be had now. */
  async tokenFor(userId: string): Promise<string | null> {
    const person = this.state.people.get(userId);
    if (!person || person.signInRequired) return null;
    if (person.accessToken && person.accessExpiresAt - EXPIRY_MARGIN_MS > this.state.now()) {
      return person.accessToken;
    }
    return this.refreshFor(userId);
  }

  /** The server refused `userId`'s access token: try one refresh, else ask them to sign in. */
  async handleUnauthorized(userId: string): Promise<void> {
    const person = this.state.people.get(userId);
    if (!person || person.signInRequired) {
      if (person) await this.requireSignIn(userId, person.signInRequired!.reason);
      return;
    }
    const spent = { ...person, accessToken: null, accessExpiresAt: 0 };
    this.state.people.set(userId, spent);
    await this.state.db.people.put(spent);
    await this.refreshFor(userId);
  }

  /** Runs a server call as the active person, refreshing once if the token is refused. */
  async asActivePerson<T>(call: (token: string) => Promise<T>): Promise<T> {
    const userId = this.state.activeUserId;
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
  async anyToken(): Promise<string | null> {
    const order = [this.state.activeUserId, ...this.state.people.keys()].filter(
      (id): id is string => !!id,
    );
    for (const userId of new Set(order)) {
      const token = await this.tokenFor(userId);
      if (token) return token;
    }
    return null;
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
    const person = this.state.people.get(userId);
    if (!person?.refreshToken) {
      if (person) await this.requireSignIn(userId, 'Your session on this tablet has ended.');
      return null;
    }
    try {
      const answer = await this.api.refresh(person.refreshToken);
      const next = { ...personFrom(answer, person.activeSiteId, this.state.now()) };
      await this.state.db.people.put(next);
      this.state.people.set(userId, next);
      this.state.publish();
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
    const person = this.state.people.get(userId);
    if (!person) return;
    const next: PersonSession = {
      ...person,
      accessToken: null,
      accessExpiresAt: 0,
      refreshToken: null,
      signInRequired: person.signInRequired ?? { reason, at: this.state.now() },
    };
    await this.state.db.people.put(next);
    this.state.people.set(userId, next);
    await this.state.countWaiting(userId);
    this.state.publish();
  }
}
