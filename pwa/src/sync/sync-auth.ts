// The seam between the sync engine and identity: the engine pushes each Outbox entry under its
// author's session, and asks the person to sign in again when the server answers 401.
// Implemented by the identity work (pwa/src/auth); conflict-tests implement it by signing in
// against the real server.
export interface SyncAuth {
  tokenFor(authorId: string): Promise<string | null>;
  onUnauthorized(authorId: string): Promise<void>;
}
