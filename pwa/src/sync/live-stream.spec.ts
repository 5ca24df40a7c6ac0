// The tablet's end of GET /api/sync/events against a scripted server: what it sends, what it
// does with each event, and how it waits before opening the stream again. The real server's side
// is tested in sync-server/src/live/live.spec.ts and with the real engine in conflict-tests/.
import { afterEach, describe, expect, it } from 'vitest';
import { LiveStream, type LiveState, type LiveStreamOptions } from './live-stream';

interface Connection {
  headers: Record<string, string>;
  send(text: string): void;
  end(): void;
}

/** A scripted server: each request gets an answer from `answer` or an open event stream. */
function server(answer?: (n: number) => Response | null) {
  const connections: Connection[] = [];
  const fetch = async (_url: RequestInfo | URL, init?: RequestInit) => {
    const headers = (init?.headers ?? {}) as Record<string, string>;
    const refused = answer?.(connections.length);
    let controller!: ReadableStreamDefaultController<Uint8Array>;
    const body = new ReadableStream<Uint8Array>({
      start: (c) => {
        controller = c;
      },
    });
    init?.signal?.addEventListener('abort', () => {
      try {
        controller.error(new DOMException('aborted', 'AbortError'));
      } catch {
        // already closed
      }
    });
    connections.push({
      headers,
      send: (text) => controller.enqueue(new TextEncoder().encode(text)),
      end: () => controller.close(),
    });
    if (refused) return refused;
    return new Response(body, { status: 200, headers: { 'Content-Type': 'text/event-stream' } });
  };
  return { fetch: fetch as typeof globalThis.fetch, connections };
}

function harness(fetch: typeof globalThis.fetch, overrides: Partial<LiveStreamOptions> = {}) {
  const delays: number[] = [];
  const pending: Array<() => void> = [];
  const heard: number[] = [];
  const states: LiveState[] = [];
  const refused: number[] = [];
  let reviews = 0;
  let tokens = 0;
  let online = true;
  const listeners: Array<(online: boolean) => void> = [];
  const stream = new LiveStream({
    baseUrl: 'http://clinic.invalid',
    fetch,
    token: async () => `token-${++tokens}`,
    network: {
      isOnline: () => online,
      subscribe: (listener) => {
        listeners.push(listener);
        return () => undefined;
      },
    },
    timers: {
      setTimeout: (run, ms) => {
        delays.push(ms);
        const handle = { cancelled: false };
        pending.push(() => {
          if (!handle.cancelled) run();
        });
        if (ms === 0) queueMicrotask(() => pending.shift()?.());
        return handle;
      },
      clearTimeout: (handle) => {
        if (handle) (handle as { cancelled: boolean }).cancelled = true;
      },
    },
    random: () => 0.5,
    onChanged: (version) => heard.push(version),
    onReview: () => {
      reviews += 1;
    },
    onState: (state) => states.push(state),
    onRefused: (status) => refused.push(status),
    ...overrides,
  });
  streams.push(stream);
  return {
    stream,
    delays,
    heard,
    states,
    refused,
    reviews: () => reviews,
    /** Runs the waiting reconnection timer (a back-off). */
    runTimer: () => pending.shift()?.(),
    setOnline: (value: boolean) => {
      online = value;
      for (const listener of listeners) listener(value);
    },
  };
}

const streams: LiveStream[] = [];
afterEach(() => {
  for (const stream of streams.splice(0)) stream.stop();
});

async function until(check: () => boolean, what: string): Promise<void> {
  for (let i = 0; i < 200; i += 1) {
    if (check()) return;
    await new Promise((resolve) => setTimeout(resolve, 5));
  }
  throw new Error(`${what} did not happen`);
}

describe('the live-changes stream on the tablet', () => {
  it('opens with the token, reports changed versions and review events, and says it is live', async () => {
    const { fetch, connections } = server();
    const h = harness(fetch);
    h.stream.start();
    await until(() => connections.length === 1, 'the first connection');
    expect(connections[0]?.headers.Authorization).toBe('Bearer token-1');
    expect(connections[0]?.headers['Last-Event-ID']).toBeUndefined();
    connections[0]?.send('retry: 5000\n\nevent: changed\nid: 4812\ndata: {"version":4812}\n\n');
    await until(() => h.heard.length === 1, 'the changed event');
    expect(h.heard).toEqual([4812]);
    connections[0]?.send(': keep-alive\n\nevent: review\ndata: {}\n\n');
    await until(() => h.reviews() === 1, 'the review event');
    expect(h.states).toEqual(['connecting', 'live']);
  });

  it('ignores a changed event whose version is not a whole number', async () => {
    const { fetch, connections } = server();
    const h = harness(fetch);
    h.stream.start();
    await until(() => connections.length === 1, 'the connection');
    connections[0]?.send(
      'event: changed\ndata: {"version":"12"}\n\nevent: changed\ndata: oops\n\n',
    );
    connections[0]?.send('event: changed\nid: 13\ndata: {"version":13}\n\n');
    await until(() => h.heard.length === 1, 'the valid event');
    expect(h.heard).toEqual([13]);
  });

  it('opens again after the server ends the stream, with back-off, a fresh token and Last-Event-ID', async () => {
    const { fetch, connections } = server();
    const h = harness(fetch);
    h.stream.start();
    await until(() => connections.length === 1, 'the first connection');
    connections[0]?.send('event: changed\nid: 77\ndata: {"version":77}\n\n');
    await until(() => h.heard.length === 1, 'the event');
    connections[0]?.end();
    await until(() => h.states.at(-1) === 'waiting', 'the wait');
    // The first retry waits 1 s with equal jitter: half fixed, half random (0.5 here).
    expect(h.delays.at(-1)).toBe(750);
    expect(connections).toHaveLength(1);
    h.runTimer();
    await until(() => connections.length === 2, 'the second connection');
    expect(connections[1]?.headers.Authorization).toBe('Bearer token-2');
    expect(connections[1]?.headers['Last-Event-ID']).toBe('77');
  });

  it('opens again at once when the server closes it for an expired token', async () => {
    const { fetch, connections } = server();
    const h = harness(fetch);
    h.stream.start();
    await until(() => connections.length === 1, 'the first connection');
    connections[0]?.send('event: closed\ndata: {"reason":"token-expired"}\n\n');
    connections[0]?.end();
    await until(() => connections.length === 2, 'the second connection');
    expect(h.delays.at(-1)).toBe(0);
    expect(h.refused).toEqual([]);
  });

  it('asks for a sync and backs off, more each time, when the stream is refused', async () => {
    const { fetch, connections } = server(
      () => new Response('{"message":"This sign-in has ended"}', { status: 401 }),
    );
    const h = harness(fetch);
    h.stream.start();
    await until(() => h.refused.length === 1, 'the refusal');
    expect(h.refused).toEqual([401]);
    expect(h.delays.at(-1)).toBe(750);
    h.runTimer();
    await until(() => h.refused.length === 2, 'the second refusal');
    expect(h.delays.at(-1)).toBe(1500);
    expect(connections).toHaveLength(2);
  });

  it('holds no stream while offline and opens one when the network returns', async () => {
    const { fetch, connections } = server();
    const h = harness(fetch);
    h.setOnline(false);
    h.stream.start();
    await new Promise((resolve) => setTimeout(resolve, 30));
    expect(connections).toHaveLength(0);
    expect(h.states).toEqual([]);
    h.setOnline(true);
    await until(() => connections.length === 1, 'the connection after reconnecting');
    await until(() => h.states.at(-1) === 'live', 'live');
    h.setOnline(false);
    expect(h.states.at(-1)).toBe('off');
  });
});
