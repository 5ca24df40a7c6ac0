// The sync engine's view of identity: a token for the author of each Outbox entry (a shared
// tablet pushes every person's entries under that person's own session), refreshed on expiry,
// and a sign-in prompt when the server refuses it. Nothing here reads or changes the Outbox.
import type { SyncAuth } from '../sync/sync-auth';
import type { SessionStore } from './session-store';

export class SessionSyncAuth implements SyncAuth {
  constructor(private readonly store: SessionStore) {}

  /** null when this author must sign in again (a prompt is showing) or the server is unreachable. */
  tokenFor(authorId: string): Promise<string | null> {
    return this.store.tokenFor(authorId);
  }

  /** The server answered 401 for this author's push: refresh once, else prompt them to sign in. */
  onUnauthorized(authorId: string): Promise<void> {
    return this.store.handleUnauthorized(authorId);
  }
}
