// A network between a simulated tablet and the real server that can drop a request, delay it,
// send it twice, deliver an old copy again later (reordering), or lose the reply after the
// server committed. Faults come from a plan the test controls (a queue, or a seeded function).
export type Fault =
  | { kind: 'deliver' }
  | { kind: 'drop' }
  | { kind: 'delay'; ms: number }
  | { kind: 'duplicate' }
  | { kind: 'lose-reply' }
  /** A proxy in between answers 502 without reaching the server. */
  | { kind: 'gateway-error' }
  /** Deliver now, and keep a copy to deliver again after a later request (a reordered resend). */
  | { kind: 'replay-later' };

export interface NetworkLogEntry {
  method: string;
  path: string;
  fault: Fault['kind'];
  status: number | null;
}

export class FaultyNetwork {
  offline = false;
  private planned: Fault[] = [];
  private stash: Array<() => Promise<unknown>> = [];
  readonly log: NetworkLogEntry[] = [];

  constructor(
    private chooser: (method: string, path: string) => Fault = () => ({ kind: 'deliver' }),
  ) {}

  /** Faults for the next requests, in order; after them the chooser decides. */
  plan(...faults: Fault[]): void {
    this.planned.push(...faults);
  }

  setChooser(chooser: (method: string, path: string) => Fault): void {
    this.chooser = chooser;
  }

  /** Delivers every stashed copy now (those left at the end of a test). */
  async flushReplays(): Promise<void> {
    for (const send of this.stash.splice(0)) await send().catch(() => undefined);
  }

  readonly fetch: typeof fetch = async (input, init) => {
    const url = typeof input === 'string' ? input : input instanceof URL ? input.href : input.url;
    const method = init?.method ?? 'GET';
    const path = new URL(url).pathname;
    if (this.offline) {
      this.log.push({ method, path, fault: 'drop', status: null });
      throw new TypeError('fetch failed: the tablet is offline');
    }
    // The live-changes stream is held open, not a request to fault: it goes as it is, and stops
    // when the tablet aborts it.
    if (path === '/api/sync/events') return globalThis.fetch(url, init);
    const fault = this.planned.shift() ?? this.chooser(method, path);
    const send = () => globalThis.fetch(url, { ...init, signal: undefined });
    // Older copies go out after this request's own delivery: their order is now shuffled.
    const releaseStash = async () => {
      const older = this.stash.splice(0);
      for (const resend of older) await resend().catch(() => undefined);
    };
    switch (fault.kind) {
      case 'drop':
        this.log.push({ method, path, fault: fault.kind, status: null });
        throw new TypeError('fetch failed: the request was lost on the way');
      case 'gateway-error':
        this.log.push({ method, path, fault: fault.kind, status: 502 });
        return new Response(JSON.stringify({ message: 'Bad gateway' }), {
          status: 502,
          headers: { 'Content-Type': 'application/json' },
        });
      case 'delay':
        await new Promise((resolve) => setTimeout(resolve, fault.ms));
        break;
      case 'duplicate': {
        const first = await send();
        await first.arrayBuffer();
        const second = await send();
        this.log.push({ method, path, fault: fault.kind, status: second.status });
        await releaseStash();
        return second;
      }
      case 'lose-reply': {
        const response = await send();
        await response.arrayBuffer();
        this.log.push({ method, path, fault: fault.kind, status: response.status });
        await releaseStash();
        throw new TypeError('fetch failed: the reply was lost after the server answered');
      }
      case 'replay-later':
        this.stash.push(send);
        break;
      case 'deliver':
        break;
    }
    const response = await send();
    this.log.push({ method, path, fault: fault.kind, status: response.status });
    await releaseStash();
    return response;
  };
}
