// The engine's requests to the clinic server: the session's token on every request, a time-out,
// and the words a failure is shown in. A failure is either worth retrying later
// (TransientSyncError: no network, a time-out, a 5xx, an answer that is not the protocol) or
// needs an update first (BlockedSyncError: 426 this app is too old, 409 the server is).
import type { SyncTimings } from './sync-timings';

/** A failure worth retrying later (network, timeout, 5xx, an answer that is not the protocol). */
export class TransientSyncError extends Error {}
/** The app or the server must be updated first (426, 409): retrying now will not help. */
export class BlockedSyncError extends Error {}

export interface SyncClock {
  now(): number;
}

export interface SyncTimers {
  setTimeout(callback: () => void, ms: number): unknown;
  clearTimeout(handle: unknown): void;
}

export const defaultTimers: SyncTimers = {
  setTimeout: (callback, ms) => globalThis.setTimeout(callback, ms),
  clearTimeout: (handle) => globalThis.clearTimeout(handle as ReturnType<typeof setTimeout>),
};

/** The server's own words for a refusal (`message` or `error` of a JSON body), else `fallback`. */
export async function messageOf(response: Response, fallback: string): Promise<string> {
  try {
    const body = (await response.clone().json()) as { message?: unknown; error?: unknown };
    const message = Array.isArray(body.message) ? body.message.join('; ') : body.message;
    if (typeof message === 'string' && message.length > 0) return message;
    if (typeof body.error === 'string' && body.error.length > 0) return body.error;
  } catch {
    // Not JSON: the fallback says what happened.
  }
  return fallback;
}

export interface SyncTransportOptions {
  /** Origin of the clinic server ('' for the app's own origin). */
  baseUrl: string;
  fetch: typeof fetch;
  clock: SyncClock;
  timers: SyncTimers;
  requestTimeoutMs: number;
}

export class SyncTransport {
  constructor(private readonly options: SyncTransportOptions) {}

  /** Sends a request under `token`; a lost network or a time-out is a TransientSyncError. */
  async request(
    path: string,
    init: RequestInit,
    token: string,
    timings: Pick<SyncTimings, 'fetchMs'>,
  ): Promise<Response> {
    const { clock, timers } = this.options;
    const controller = new AbortController();
    const timeout = timers.setTimeout(() => controller.abort(), this.options.requestTimeoutMs);
    const started = clock.now();
    try {
      return await this.options.fetch(`${this.options.baseUrl}${path}`, {
        ...init,
        signal: controller.signal,
        headers: {
          ...(init.headers as Record<string, string> | undefined),
          Authorization: `Bearer ${token}`,
          Accept: 'application/json',
        },
      });
    } catch (error) {
      const why =
        error instanceof Error && error.name === 'AbortError'
          ? 'did not answer in time'
          : 'could not be reached';
      throw new TransientSyncError(
        `The clinic server ${why}; edits are kept on this tablet and sent later`,
      );
    } finally {
      timers.clearTimeout(timeout);
      timings.fetchMs += clock.now() - started;
    }
  }

  /** The answer's JSON; an answer that is not JSON is a TransientSyncError. */
  async readJson(response: Response, timings: Pick<SyncTimings, 'parseMs'>): Promise<unknown> {
    const started = this.options.clock.now();
    try {
      return await response.json();
    } catch {
      throw new TransientSyncError(
        'The clinic server sent an answer this app cannot read; it will try again',
      );
    } finally {
      timings.parseMs += this.options.clock.now() - started;
    }
  }

  /** The error a refused request (not 2xx, not 401) is reported as. */
  async failureOf(response: Response, step: 'send' | 'receive'): Promise<Error> {
    if (response.status === 426) {
      return new BlockedSyncError(
        await messageOf(
          response,
          'This app is older than the clinic server accepts: update the app. Your edits stay on this tablet.',
        ),
      );
    }
    if (response.status === 409) {
      return new BlockedSyncError(
        await messageOf(
          response,
          'The clinic server is older than this app: the server must be updated first. Your edits stay on this tablet.',
        ),
      );
    }
    const message = await messageOf(response, `the server answered ${response.status}`);
    return new TransientSyncError(
      step === 'send'
        ? `Could not send edits (${response.status}): ${message}. They stay in the Outbox and are sent again later`
        : `Could not receive updates (${response.status}): ${message}. It will try again`,
    );
  }
}
