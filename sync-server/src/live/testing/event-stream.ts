// A test reader of GET /api/sync/events over a real socket (fetch streaming), parsing the
// server-sent events as a tablet would, with waits that fail by naming what did not come.
export interface ReceivedEvent {
  event: string;
  data: string;
  id: string | null;
  at: number;
}

export interface OpenedStream {
  status: number;
  contentType: string | null;
  /** The body of a refusal (status not 200). */
  body: unknown;
  events: ReceivedEvent[];
  /** Resolves with the first event (after `from`) that matches, or rejects after `timeoutMs`. */
  next(
    match: (event: ReceivedEvent) => boolean,
    timeoutMs: number,
    from?: number,
  ): Promise<ReceivedEvent>;
  /** Resolves when the server ended the stream (with the time), or rejects after `timeoutMs`. */
  ended(timeoutMs: number): Promise<number>;
  close(): void;
}

export async function openEventStream(
  baseUrl: string,
  headers: Record<string, string>,
  path = '/api/sync/events',
): Promise<OpenedStream> {
  const controller = new AbortController();
  const response = await fetch(`${baseUrl}${path}`, {
    headers: { Accept: 'text/event-stream', ...headers },
    signal: controller.signal,
  });
  const events: ReceivedEvent[] = [];
  let endedAt: number | null = null;
  const waiters = new Set<() => void>();
  const wake = () => {
    for (const waiter of [...waiters]) waiter();
  };
  if (response.status !== 200) {
    return {
      status: response.status,
      contentType: response.headers.get('content-type'),
      body: await response.json().catch(() => null),
      events,
      next: () => Promise.reject(new Error(`the stream was refused (${response.status})`)),
      ended: () => Promise.resolve(Date.now()),
      close: () => controller.abort(),
    };
  }
  void (async () => {
    const decoder = new TextDecoder();
    let buffer = '';
    try {
      for await (const chunk of response.body as unknown as AsyncIterable<Uint8Array>) {
        buffer += decoder.decode(chunk, { stream: true });
        let split: number;
        while ((split = buffer.indexOf('\n\n')) >= 0) {
          const block = buffer.slice(0, split);
          buffer = buffer.slice(split + 2);
          let event = 'message';
          let id: string | null = null;
          const data: string[] = [];
          let hasField = false;
          for (const line of block.split('\n')) {
            if (line.startsWith(':')) continue;
            const colon = line.indexOf(':');
            const field = colon < 0 ? line : line.slice(0, colon);
            const value = colon < 0 ? '' : line.slice(colon + 1).replace(/^ /, '');
            if (field === 'event') event = value;
            else if (field === 'data') data.push(value);
            else if (field === 'id') id = value;
            else if (field === 'retry') event = 'retry';
            else continue;
            hasField = true;
          }
          if (block.startsWith(':'))
            events.push({ event: 'comment', data: block, id, at: Date.now() });
          else if (hasField) events.push({ event, data: data.join('\n'), id, at: Date.now() });
          wake();
        }
      }
    } catch {
      // Aborted by the test.
    }
    endedAt = Date.now();
    wake();
  })();
  const wait = <T>(check: () => T | undefined, timeoutMs: number, what: string) =>
    new Promise<T>((resolve, reject) => {
      const found = check();
      if (found !== undefined) return resolve(found);
      const timer = setTimeout(() => {
        waiters.delete(waiter);
        reject(
          new Error(
            `${what} did not come within ${timeoutMs} ms; got ${JSON.stringify(events.map((e) => [e.event, e.data]))}`,
          ),
        );
      }, timeoutMs);
      const waiter = () => {
        const value = check();
        if (value === undefined) return;
        clearTimeout(timer);
        waiters.delete(waiter);
        resolve(value);
      };
      waiters.add(waiter);
    });
  return {
    status: response.status,
    contentType: response.headers.get('content-type'),
    body: null,
    events,
    next: (match, timeoutMs, from = 0) =>
      wait(() => events.slice(from).find(match), timeoutMs, 'the event'),
    ended: (timeoutMs) => wait(() => endedAt ?? undefined, timeoutMs, 'the end of the stream'),
    close: () => controller.abort(),
  };
}

/** A `changed` event carrying `version` (or any version when omitted). */
export function changedTo(version?: number): (event: ReceivedEvent) => boolean {
  return (event) =>
    event.event === 'changed' &&
    (version === undefined || (JSON.parse(event.data) as { version: number }).version === version);
}

export function versionOf(event: ReceivedEvent): number {
  return (JSON.parse(event.data) as { version: number }).version;
}
