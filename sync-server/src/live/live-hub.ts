// The open live-changes streams of this server process (docs/sync-protocol.md, "Live changes").
// Notices come from the process's one listening connection (change-listener.ts), so a commit made
// through any process reaches the streams of every process. What a stream is sent:
// - `changed` {version}: the highest committed version among the device's own sites, read by one
//   statement per flush for all streams (records/site-versions.ts), sent when it is above what the
//   stream last had. Notices are coalesced: the first is acted on at once, later ones within
//   COALESCE_MS of a flush wait for the next one. A notice of sites a stream does not serve does
//   nothing to it.
// - `review` {}: to supervisors' streams, when the open disputes or the countersign queue of one
//   of their sites may have changed. A supervisor at a desk (no tablet) holds a stream of
//   `review` events only (GET /api/review/events).
// - a keep-alive comment every keepAliveMs (one timer for every stream).
// - `closed` {reason}, then the end: the session ended, the person was deactivated or the tablet
//   revoked (checked for all streams in one statement every LIVENESS_MS, so within a second,
//   whichever process revoked it), or the access token expired (the tablet opens a new stream
//   with a fresh token).
// A stream whose reader does not keep up (its previous writes still wait in the process's buffer)
// is dropped instead of buffered without bound; the tablet reconnects and pulls.
import { EntityManager } from '@mikro-orm/postgresql';
import {
  Inject,
  Injectable,
  Logger,
  type OnApplicationBootstrap,
  type OnModuleDestroy,
} from '@nestjs/common';
import type { AuthUser } from '../auth/auth-user';
import { liveSessionIds } from '../auth/live-sessions';
import { sitesOf } from '../auth/scope';
import { CLOCK, type Clock } from '../common/clock.provider';
import { APP_CONFIG, type AppConfig } from '../config/app-config';
import type { ChangeNotice } from '../records/change-notice';
import { highestOf, latestVersionsOf } from '../records/site-versions';
import { ChangeListener } from './change-listener';

/** Notices within this long of a flush are coalesced into the next one. */
export const COALESCE_MS = 100;
/** How often open streams' sessions are checked (a revoked stream closes within a second). */
export const LIVENESS_MS = 400;
/** The reconnection delay the stream asks of a client (`retry:`), in ms. */
export const RETRY_MS = 5_000;

/** Where a stream's text goes: the HTTP response (tests give a plain Writable). */
export interface LiveSink {
  write(chunk: string): boolean;
  readonly writableNeedDrain: boolean;
  end(): void;
  destroy(): void;
}

export type CloseReason = 'session-ended' | 'token-expired' | 'slow-reader' | 'server-stopping';

interface LiveStream {
  id: number;
  sink: LiveSink;
  sessionId: string;
  sites: string[];
  desk: boolean;
  /** False for a Review desk stream, which hears `review` only. */
  changes: boolean;
  /** The access token's expiry (ms since the epoch, by the server clock), or null. */
  expiresAt: number | null;
  /** The version last sent (or the Last-Event-ID the client came back with). */
  lastSent: number;
}

export interface LiveHubFigures {
  streams: number;
  listening: boolean;
  flushes: number;
  dropped: number;
}

@Injectable()
export class LiveHub implements OnApplicationBootstrap, OnModuleDestroy {
  private readonly logger = new Logger('LiveChanges');
  private readonly streams = new Map<number, LiveStream>();
  private nextId = 1;
  private readonly listener: ChangeListener;
  /** Sites touched since the last flush ('all' after a reconnection); desk sites likewise. */
  private pendingSites: Set<string> | 'all' = new Set();
  private pendingDesk: Set<string> | 'all' = new Set();
  private flushTimer: NodeJS.Timeout | null = null;
  private flushing: Promise<void> | null = null;
  private lastFlushAt = 0;
  private keepAliveTimer: NodeJS.Timeout | null = null;
  private livenessTimer: NodeJS.Timeout | null = null;
  private checking = false;
  private readonly figures = { flushes: 0, dropped: 0 };

  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(CLOCK) private readonly clock: Clock,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
  ) {
    this.listener = new ChangeListener(
      { databaseUrl: config.databaseUrl },
      {
        notice: (notice) => this.noticed(notice),
        listening: () => this.noticed({ sites: 'all', desk: true }),
      },
    );
  }

  async onApplicationBootstrap(): Promise<void> {
    await this.listener.start();
    this.keepAliveTimer = setInterval(() => this.keepAlive(), this.config.liveKeepAliveMs);
    this.keepAliveTimer.unref();
    this.livenessTimer = setInterval(() => void this.checkLiveness(), LIVENESS_MS);
    this.livenessTimer.unref();
  }

  async onModuleDestroy(): Promise<void> {
    if (this.keepAliveTimer) clearInterval(this.keepAliveTimer);
    if (this.livenessTimer) clearInterval(this.livenessTimer);
    if (this.flushTimer) clearTimeout(this.flushTimer);
    for (const stream of [...this.streams.values()]) this.close(stream, 'server-stopping');
    await this.listener.stop();
    await this.flushing;
  }

  /** The backend pid of the listening connection (tests end it to act out a restart). */
  get listenerPid(): number | null {
    return this.listener.backendPid;
  }

  snapshot(): LiveHubFigures {
    return { streams: this.streams.size, listening: this.listener.listening, ...this.figures };
  }

  /**
   * Registers a stream and sends it `retry:` and the current version (when above `lastEventId`).
   * Returns the function that forgets it (call it when the connection closes).
   */
  async open(
    sink: LiveSink,
    user: AuthUser,
    options: { lastEventId: number | null; expiresAt: number | null; reviewOnly?: boolean },
  ): Promise<() => void> {
    const stream: LiveStream = {
      id: this.nextId++,
      sink,
      sessionId: user.sessionId,
      sites: sitesOf(user),
      desk: user.role === 'supervisor',
      changes: options.reviewOnly !== true,
      expiresAt: options.expiresAt,
      lastSent: options.lastEventId ?? -1,
    };
    this.streams.set(stream.id, stream);
    const forget = () => {
      this.streams.delete(stream.id);
    };
    this.write(stream, `retry: ${RETRY_MS}\n\n`);
    if (!stream.changes) return forget;
    try {
      const latest = await latestVersionsOf(this.em.fork(), stream.sites);
      this.sendChanged(stream, highestOf(latest, stream.sites));
    } catch (error) {
      // The stream stays; the next notice or reconnection tells it.
      this.logger.warn(`could not read the versions for a new stream: ${String(error)}`);
    }
    return forget;
  }

  private noticed(notice: ChangeNotice): void {
    if (notice.sites === 'all') {
      this.pendingSites = 'all';
      if (notice.desk) this.pendingDesk = 'all';
    } else {
      const pendingSites = this.pendingSites;
      const pendingDesk = this.pendingDesk;
      for (const site of notice.sites) {
        if (pendingSites !== 'all') pendingSites.add(site);
        if (notice.desk && pendingDesk !== 'all') pendingDesk.add(site);
      }
    }
    this.scheduleFlush();
  }

  private scheduleFlush(): void {
    if (this.flushTimer || this.flushing) return;
    const wait = Math.max(0, this.lastFlushAt + COALESCE_MS - performance.now());
    this.flushTimer = setTimeout(() => {
      this.flushTimer = null;
      this.flushing = this.flush().finally(() => {
        this.flushing = null;
        const sites = this.pendingSites;
        const desk = this.pendingDesk;
        if (sites === 'all' || sites.size > 0 || desk === 'all' || desk.size > 0) {
          this.scheduleFlush();
        }
      });
    }, wait);
  }

  private async flush(): Promise<void> {
    const touched = this.pendingSites;
    const desk = this.pendingDesk;
    this.pendingSites = new Set();
    this.pendingDesk = new Set();
    this.lastFlushAt = performance.now();
    const hits = (sites: Set<string> | 'all', stream: LiveStream) =>
      sites === 'all' || stream.sites.some((site) => sites.has(site));
    const changed = [...this.streams.values()].filter(
      (stream) => stream.changes && hits(touched, stream),
    );
    const review = [...this.streams.values()].filter((stream) => stream.desk && hits(desk, stream));
    if (changed.length === 0 && review.length === 0) return;
    this.figures.flushes += 1;
    if (changed.length > 0) {
      const sites = [...new Set(changed.flatMap((stream) => stream.sites))];
      let latest: Map<string, number>;
      try {
        latest = await latestVersionsOf(this.em.fork(), sites);
      } catch (error) {
        this.logger.warn(`could not read the latest versions: ${String(error)}; trying again`);
        this.pendingSites = 'all';
        this.lastFlushAt = performance.now() + 1_000;
        return;
      }
      for (const stream of changed) {
        if (this.streams.has(stream.id)) this.sendChanged(stream, highestOf(latest, stream.sites));
      }
    }
    for (const stream of review) {
      if (this.streams.has(stream.id)) this.write(stream, `event: review\ndata: {}\n\n`);
    }
  }

  private sendChanged(stream: LiveStream, version: number): void {
    if (version <= stream.lastSent) return;
    stream.lastSent = version;
    this.write(stream, `event: changed\nid: ${version}\ndata: ${JSON.stringify({ version })}\n\n`);
  }

  private keepAlive(): void {
    for (const stream of [...this.streams.values()]) this.write(stream, `: keep-alive\n\n`);
  }

  /** Closes the streams whose session ended or whose token expired. */
  private async checkLiveness(): Promise<void> {
    if (this.checking || this.streams.size === 0) return;
    this.checking = true;
    try {
      const now = this.clock.now().getTime();
      for (const stream of [...this.streams.values()]) {
        if (stream.expiresAt !== null && stream.expiresAt <= now)
          this.close(stream, 'token-expired');
      }
      const open = [...this.streams.values()];
      if (open.length === 0) return;
      const live = await liveSessionIds(
        this.em.fork(),
        open.map((stream) => stream.sessionId),
      );
      for (const stream of open) {
        if (!live.has(stream.sessionId)) this.close(stream, 'session-ended');
      }
    } catch (error) {
      this.logger.warn(`could not check the open streams' sessions: ${String(error)}`);
    } finally {
      this.checking = false;
    }
  }

  /** Writes unless the reader has not taken the last writes yet: then the stream is dropped. */
  private write(stream: LiveStream, text: string): void {
    if (!this.streams.has(stream.id)) return;
    if (stream.sink.writableNeedDrain) {
      this.figures.dropped += 1;
      this.streams.delete(stream.id);
      stream.sink.destroy();
      return;
    }
    stream.sink.write(text);
  }

  private close(stream: LiveStream, reason: CloseReason): void {
    this.write(stream, `event: closed\ndata: ${JSON.stringify({ reason })}\n\n`);
    this.streams.delete(stream.id);
    stream.sink.end();
  }
}
