// Which failures mean "the database cannot be reached right now" (PostgreSQL stopped,
// restarting, refusing connections, or a connection cut mid-request), as opposed to a bug or a
// bad value. Those are answered 503 with a message the tablet shows and a Retry-After: the
// tablet keeps its Outbox and sends again, and the change log makes a resend that had committed
// a replay (docs/sync-protocol.md).

/** SQLSTATE classes and codes of a server that is going away or not there. */
const UNAVAILABLE_SQLSTATES = /^(08|57P0[1-3]|53300)/;
const UNAVAILABLE_NODE_CODES = new Set([
  'ECONNREFUSED',
  'ECONNRESET',
  'EPIPE',
  'ETIMEDOUT',
  'ENOTFOUND',
  'EHOSTUNREACH',
  'EAI_AGAIN',
]);
const UNAVAILABLE_MESSAGES = [
  /Connection terminated/i,
  /Knex: Timeout acquiring a connection/i,
  /Query read timeout/i,
  /timeout exceeded when trying to connect/i,
  /the database system is (starting up|shutting down|in recovery mode)/i,
  /terminating connection due to administrator command/i,
  /Client has encountered a connection error and is not queryable/i,
];

export const DATABASE_UNAVAILABLE_MESSAGE =
  'The clinic database is not answering right now. Nothing was lost: the tablet keeps its changes and sends them again shortly.';

/** Whether this error, or one it wraps, says the database cannot be reached. */
export function isDatabaseUnavailable(error: unknown, depth = 0): boolean {
  if (error === null || typeof error !== 'object' || depth > 5) return false;
  const e = error as { code?: unknown; message?: unknown; cause?: unknown; name?: unknown };
  if (typeof e.code === 'string') {
    if (UNAVAILABLE_NODE_CODES.has(e.code) || UNAVAILABLE_SQLSTATES.test(e.code)) return true;
  }
  if (e.name === 'ConnectionException' || e.name === 'KnexTimeoutError') return true;
  if (
    typeof e.message === 'string' &&
    UNAVAILABLE_MESSAGES.some((re) => re.test(e.message as string))
  ) {
    return true;
  }
  return isDatabaseUnavailable(e.cause, depth + 1);
}
