// The tablet's end of the live-changes stream (docs/sync-protocol.md, "Live changes"):
// GET /api/sync/events read with fetch streaming through @microsoft/fetch-event-source (an
// EventSource cannot send the Authorization header). It only says "pull now": `changed` carries
// the highest version the tablet's sites hold, `review` tells the Review desk its queues moved.
// - No stream while offline; it opens when the network returns.
// - Each connection asks for a fresh token (an access token expires; the server closes the stream
//   then with `closed` {reason: "token-expired"} and the tablet opens a new one at once).
// - A lost or refused stream is opened again after exponential back-off with jitter (backoff.ts),
//   so tablets coming back together do not reconnect in lockstep; the 30-second sync timer goes on
//   meanwhile. A 401/403 asks the engine for a sync, which shows the person what to do.
// - Last-Event-ID carries the version last heard, so a stream coming back only answers with a
//   newer one.
import { fetchEventSource, type EventSourceMessage } from '@microsoft/fetch-event-source';
import { backoffDelay, type BackoffPolicy } from './backoff';
import type { NetworkMonitor } from './sync-schedule';
import type { SyncTimers } from './sync-transport';

export type LiveState = 'off' | 'connecting' | 'live' | 'waiting';

export interface LiveStreamOptions {
  baseUrl: string;
  /** The stream's route: the tablet's changes (default) or the Review desk's own. */
  path?: '/api/sync/events' | '/api/review/events';
  fetch: typeof fetch;
  /** The token of the person using the tablet now, or null (nobody: no stream). */
  token: () => Promise<string | null>;
  network: NetworkMonitor;
  timers: SyncTimers;
  random: () => number;
  backoff?: BackoffPolicy;
  onChanged: (version: number) => void;
  onReview: () => void;
  onState: (state: LiveState) => void;
  /** The server refused the stream (401/403): the engine syncs, which words what to do. */
  onRefused: (status: number) => void;
}

/** Reconnection waits: 1 s, 2 s, 4 s… up to a minute, half fixed and half random. */
export const LIVE_BACKOFF: BackoffPolicy = { baseMs: 1_000, maxMs: 60_000 };

class Refused extends Error {
  constructor(readonly status: number) {
    super(`the live stream was refused (${status})`);
  }
}
class Ended extends Error {
  constructor(readonly reason: string | null) {
    super(`the live stream ended (${reason ?? 'no reason'})`);
  }
}

export class LiveStream {
  private controller: AbortController | null = null;
  private timer: unknown = null;
  private running = false;
  private failures = 0;
  private lastEventId: string | null = null;
  private unsubscribe: (() => void) | null = null;
  private state: LiveState = 'off';

  constructor(private readonly options: LiveStreamOptions) {}

  start(): void {
    if (this.running) return;
    this.running = true;
    this.unsubscribe = this.options.network.subscribe((online) => {
      if (online) {
        this.failures = 0;
        this.connectSoon(0);
      } else {
        this.disconnect();
        this.setState('off');
      }
    });
    this.connectSoon(0);
  }

  stop(): void {
    this.running = false;
    this.unsubscribe?.();
    this.unsubscribe = null;
    this.disconnect();
    this.setState('off');
  }

  private setState(state: LiveState): void {
    if (state === this.state) return;
    this.state = state;
    this.options.onState(state);
  }

  private disconnect(): void {
    if (this.timer !== null) this.options.timers.clearTimeout(this.timer);
    this.timer = null;
    this.controller?.abort();
    this.controller = null;
  }

  private connectSoon(delayMs: number): void {
    this.disconnect();
    if (!this.running) return;
    if (!this.options.network.isOnline()) {
      this.setState('off');
      return;
    }
    this.setState(delayMs > 0 ? 'waiting' : 'connecting');
    this.timer = this.options.timers.setTimeout(() => {
      this.timer = null;
      void this.connect();
    }, delayMs);
  }

  private async connect(): Promise<void> {
    if (!this.running || !this.options.network.isOnline()) return;
    const token = await this.options.token().catch(() => null);
    if (!this.running) return;
    if (!token) {
      this.failures += 1;
      this.connectSoon(backoffDelay(this.failures, this.options.random, this.backoff));
      return;
    }
    const controller = new AbortController();
    this.controller = controller;
    this.setState('connecting');
    let wait: number;
    try {
      await fetchEventSource(`${this.options.baseUrl}${this.options.path ?? '/api/sync/events'}`, {
        signal: controller.signal,
        fetch: this.options.fetch,
        openWhenHidden: true,
        headers: {
          Authorization: `Bearer ${token}`,
          ...(this.lastEventId ? { 'Last-Event-ID': this.lastEventId } : {}),
        },
        onopen: async (response) => {
          if (response.status === 401 || response.status === 403)
            throw new Refused(response.status);
          const type = response.headers.get('content-type') ?? '';
          if (!response.ok || !type.startsWith('text/event-stream'))
            throw new Error(`the live stream answered ${response.status}`);
          this.failures = 0;
          this.setState('live');
        },
        onmessage: (message) => this.receive(message),
        onclose: () => {
          throw new Ended(null);
        },
        onerror: (error: unknown) => {
          // Never retried inside the package: every new connection takes a fresh token here.
          throw error;
        },
      });
      // Resolves without an error only when aborted (stop, offline).
      return;
    } catch (error) {
      if (controller.signal.aborted || !this.running) return;
      if (error instanceof Ended && error.reason === 'token-expired') {
        wait = 0;
      } else {
        this.failures += 1;
        wait = backoffDelay(this.failures, this.options.random, this.backoff);
        if (error instanceof Refused) this.options.onRefused(error.status);
        if (error instanceof Ended && error.reason === 'session-ended') this.options.onRefused(401);
      }
    }
    if (this.controller === controller) this.controller = null;
    this.connectSoon(wait);
  }

  private get backoff(): BackoffPolicy {
    return this.options.backoff ?? LIVE_BACKOFF;
  }

  private receive(message: EventSourceMessage): void {
    if (message.event === 'changed') {
      const version = (safeJson(message.data) as { version?: unknown } | null)?.version;
      if (typeof version === 'number' && Number.isSafeInteger(version)) {
        this.lastEventId = message.id || String(version);
        this.options.onChanged(version);
      }
    } else if (message.event === 'review') {
      this.options.onReview();
    } else if (message.event === 'closed') {
      const reason = (safeJson(message.data) as { reason?: unknown } | null)?.reason;
      throw new Ended(typeof reason === 'string' ? reason : null);
    }
  }
}

function safeJson(text: string): unknown {
  try {
    return JSON.parse(text) as unknown;
  } catch {
    return null;
  }
}
