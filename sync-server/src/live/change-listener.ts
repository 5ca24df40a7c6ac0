// The one PostgreSQL connection per server process that LISTENs for change notices
// (records/change-notice.ts), never one per tablet. It is a plain `pg` client of its own (a pooled
// connection would be handed back and lose its LISTEN). When the connection is lost (PostgreSQL
// restarted, the backend was terminated, the network dropped) it connects again with back-off and
// jitter, LISTENs again, and reports `listening`: notices sent while it was away are lost, so the
// hub then tells every stream the current versions and the tablets catch up by pull.
import { Logger } from '@nestjs/common';
import pg from 'pg';
import { CHANGE_CHANNEL, decodeChangeNotice, type ChangeNotice } from '../records/change-notice';

export interface ChangeListenerEvents {
  notice(notice: ChangeNotice): void;
  /**
   * Listening (first time or again after the connection was lost): notices sent before now may
   * have been missed, so every stream is told the current versions.
   */
  listening(): void;
}

export interface ChangeListenerOptions {
  databaseUrl: string;
  /** First and largest wait before connecting again; each wait is half fixed, half random. */
  retryBaseMs?: number;
  retryMaxMs?: number;
  /** How often an idle connection is checked with a round trip (a dead peer is found then). */
  pingMs?: number;
  random?: () => number;
}

export class ChangeListener {
  private readonly logger = new Logger('LiveChanges');
  private client: pg.Client | null = null;
  private stopped = false;
  private failures = 0;
  private everConnected = false;
  private retryTimer: NodeJS.Timeout | null = null;
  private pingTimer: NodeJS.Timeout | null = null;
  /** The backend pid of the listening connection (tests cut it to act out a restart). */
  backendPid: number | null = null;

  constructor(
    private readonly options: ChangeListenerOptions,
    private readonly events: ChangeListenerEvents,
  ) {}

  get listening(): boolean {
    return this.backendPid !== null;
  }

  /** Connects and LISTENs; resolves after the first attempt, whether it worked or not. */
  async start(): Promise<void> {
    this.stopped = false;
    await this.connect();
  }

  async stop(): Promise<void> {
    this.stopped = true;
    if (this.retryTimer) clearTimeout(this.retryTimer);
    if (this.pingTimer) clearInterval(this.pingTimer);
    this.retryTimer = null;
    this.pingTimer = null;
    const client = this.client;
    this.client = null;
    this.backendPid = null;
    if (client) await client.end().catch(() => undefined);
  }

  private async connect(): Promise<void> {
    if (this.stopped) return;
    const client = new pg.Client({
      connectionString: this.options.databaseUrl,
      keepAlive: true,
      application_name: 'fuselight-live-listener',
    });
    client.on('notification', (message) => {
      if (message.channel !== CHANGE_CHANNEL) return;
      const notice = decodeChangeNotice(message.payload);
      if (notice) this.events.notice(notice);
    });
    // A lost connection ends the client: 'error' and/or 'end' come, each handled once.
    let lost = false;
    const onLost = (why: string) => {
      if (lost || this.client !== client) return;
      lost = true;
      this.client = null;
      this.backendPid = null;
      if (this.pingTimer) clearInterval(this.pingTimer);
      this.pingTimer = null;
      client.end().catch(() => undefined);
      if (this.stopped) return;
      this.logger.warn(`listening connection lost (${why}); connecting again`);
      this.scheduleRetry();
    };
    client.on('error', (error) => onLost(error.message));
    client.on('end', () => onLost('connection ended'));
    this.client = client;
    try {
      await client.connect();
      const result = await client.query<{ pid: number }>(
        `listen "${CHANGE_CHANNEL}"; select pg_backend_pid() as "pid"`,
      );
      const rows = (Array.isArray(result) ? result.at(-1) : result) as pg.QueryResult<{
        pid: number;
      }>;
      if (this.stopped || this.client !== client) {
        await client.end().catch(() => undefined);
        return;
      }
      this.backendPid = rows.rows[0]?.pid ?? null;
      this.failures = 0;
      this.pingTimer = setInterval(() => {
        client.query('select 1').catch((error: Error) => onLost(error.message));
      }, this.options.pingMs ?? 15_000);
      this.pingTimer.unref();
      if (this.everConnected) this.logger.log('listening again for change notices');
      this.everConnected = true;
      this.events.listening();
    } catch (error) {
      onLost(error instanceof Error ? error.message : String(error));
    }
  }

  private scheduleRetry(): void {
    if (this.stopped || this.retryTimer) return;
    this.failures += 1;
    const base = this.options.retryBaseMs ?? 100;
    const max = this.options.retryMaxMs ?? 5_000;
    const ceiling = Math.min(max, base * 2 ** Math.min(this.failures - 1, 20));
    const random = this.options.random ?? Math.random;
    const delay = Math.round(ceiling / 2 + (ceiling / 2) * random());
    this.retryTimer = setTimeout(() => {
      this.retryTimer = null;
      void this.connect();
    }, delay);
    this.retryTimer.unref();
  }
}
