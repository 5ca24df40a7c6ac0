// A write the browser refused because the tablet's storage is full (IndexedDB's
// QuotaExceededError, which Dexie passes on as its own QuotaExceededError or inside an
// AbortError). The edit's transaction is undone as a whole, so the record and its Outbox entry
// are both unwritten and every earlier Outbox entry is still there; the screen keeps what was
// typed and says so in these words.

export const STORAGE_FULL_WORDS =
  'This tablet’s storage is full, so this edit was not saved. What you typed is still on screen, and nothing already in the Outbox was lost. Sync to send the Outbox, or free space on the tablet, then save again.';

export class StorageFullError extends Error {
  constructor(message = STORAGE_FULL_WORDS, options?: { cause?: unknown }) {
    super(message, options);
    this.name = 'StorageFullError';
  }
}

/** True when the error, or one it wraps (Dexie's `inner`, a `cause`), is a quota refusal. */
export function isQuotaExceeded(error: unknown, depth = 0): boolean {
  if (depth > 4 || typeof error !== 'object' || error === null) return false;
  if (error instanceof StorageFullError) return true;
  const { name, inner, cause } = error as { name?: unknown; inner?: unknown; cause?: unknown };
  if (name === 'QuotaExceededError') return true;
  return isQuotaExceeded(inner, depth + 1) || isQuotaExceeded(cause, depth + 1);
}

/** The error to show for a failed write: a quota refusal in words, anything else as it came. */
export function wordStorageError(error: unknown): unknown {
  if (error instanceof StorageFullError || !isQuotaExceeded(error)) return error;
  return new StorageFullError(STORAGE_FULL_WORDS, { cause: error });
}
