// One simulated tablet: its own Dexie database on fake-indexeddb, its own controllable clock, the
// real PWA repositories and sync engine, a faulty network to the real server, and a real SyncAuth.
import type { CollectionName, PushResult, RecordFieldsInput } from '@fuselight/shared';
import type { DataKeyVault } from '@pwa/data/crypto/data-key-vault';
import { FuselightDb, type OutboxEntry, type StoredRecord } from '@pwa/data/db';
import { OutboxRepository } from '@pwa/data/outbox-repository';
import { RecordsRepository, type EditContext } from '@pwa/data/records-repository';
import { SyncEngine, type SyncOutcome } from '@pwa/sync/sync-engine';
import type { TestDevice, TestUser } from '@server/testing/identity-factory';
import type { Clinic } from './clinic-server';
import { FaultyNetwork } from './faulty-network';
import { ServerSyncAuth } from './server-sync-auth';

let tabletCount = 0;

export class SimTablet {
  readonly db: FuselightDb;
  readonly records: RecordsRepository;
  readonly outbox: OutboxRepository;
  readonly network = new FaultyNetwork();
  readonly auth: ServerSyncAuth;
  readonly engine: SyncEngine;
  /** Milliseconds this tablet's clock is ahead of the server's (negative: behind). */
  skewMs = 0;
  /** Every push result this tablet received, with the entry it answers and when (performance.now()). */
  readonly acks: Array<{ entry: OutboxEntry; result: PushResult; at: number }> = [];
  /** Who is using the tablet now. */
  user: TestUser;
  private readonly people: TestUser[];

  constructor(
    readonly name: string,
    private readonly clinic: Clinic,
    readonly device: TestDevice,
    people: TestUser[],
    private readonly options: {
      schemaVersion?: number;
      pageLimit?: number;
      dbName?: string;
      /** The server this tablet talks to (default the clinic's first). */
      baseUrl?: string;
      /** Hold the live-changes stream and pull when it says so (the app does). */
      live?: boolean;
      /** A protected tablet's vault (holding its data key); default: the shared one. */
      vault?: DataKeyVault;
    } = {},
  ) {
    tabletCount += 1;
    this.people = people;
    this.user = people[0] as TestUser;
    this.db = new FuselightDb(
      options.dbName ?? `tablet-${name}-${process.pid}-${tabletCount}`,
      options.vault,
    );
    this.records = new RecordsRepository(this.db);
    this.outbox = new OutboxRepository(this.db);
    const baseUrl = options.baseUrl ?? clinic.baseUrl;
    this.auth = new ServerSyncAuth(baseUrl, device, new Map(people.map((p) => [p.id, p])));
    this.engine = new SyncEngine({
      db: this.db,
      baseUrl,
      live: options.live === true,
      auth: this.auth,
      deviceId: device.deviceId,
      pullAs: () => this.user.id,
      fetch: this.network.fetch,
      clock: { now: () => this.nowMs() },
      random: () => 0.5,
      network: {
        isOnline: () => !this.network.offline,
        subscribe: () => () => undefined,
      },
      yieldToUi: () => Promise.resolve(),
      onPushResult: (entry, result) => this.acks.push({ entry, result, at: performance.now() }),
      requestTimeoutMs: 30_000,
      ...(options.schemaVersion === undefined ? {} : { schemaVersion: options.schemaVersion }),
      ...(options.pageLimit === undefined ? {} : { pageLimit: options.pageLimit }),
    });
  }

  static async create(
    clinic: Clinic,
    name: string,
    people: TestUser[],
    options: {
      schemaVersion?: number;
      pageLimit?: number;
      baseUrl?: string;
      live?: boolean;
      vault?: DataKeyVault;
    } = {},
  ): Promise<SimTablet> {
    const device = await clinic.device();
    return new SimTablet(name, clinic, device, people, options);
  }

  nowMs(): number {
    return this.clinic.nowMs() + this.skewMs;
  }

  ctx(author: TestUser = this.user): EditContext {
    return { authorId: author.id, deviceId: this.device.deviceId, nowMs: this.nowMs() };
  }

  create<C extends CollectionName>(collection: C, fields: RecordFieldsInput<C>, author?: TestUser) {
    return this.records.create(collection, fields, this.ctx(author));
  }

  update<C extends CollectionName>(
    collection: C,
    id: string,
    fields: Partial<RecordFieldsInput<C>>,
    author?: TestUser,
  ) {
    return this.records.update(collection, id, fields, this.ctx(author));
  }

  remove(collection: CollectionName, id: string, author?: TestUser) {
    return this.records.remove(collection, id, this.ctx(author));
  }

  sync(): Promise<SyncOutcome> {
    return this.engine.syncOnce();
  }

  /** Syncs until the Outbox holds no pending entry and a full pull ran (bounded). */
  async syncUntilSettled(maxRounds = 10): Promise<SyncOutcome> {
    let outcome: SyncOutcome = { kind: 'offline' };
    for (let round = 0; round < maxRounds; round += 1) {
      outcome = await this.engine.syncOnce();
      const pending = await this.db.outbox.where('state').equals('pending').count();
      if (outcome.kind === 'synced' && pending === 0) return outcome;
    }
    return outcome;
  }

  get(collection: CollectionName, id: string): Promise<StoredRecord | undefined> {
    return this.db.records.get([collection, id] as unknown as string);
  }

  entries(): Promise<OutboxEntry[]> {
    return this.db.outbox.orderBy('seq').toArray();
  }

  /** Every record as {collection/id: {version, deleted, fields}} for convergence checks. */
  async snapshot(): Promise<
    Record<
      string,
      { version: number; deleted: boolean; fields: Record<string, unknown>; conflicts: string[] }
    >
  > {
    const all = await this.db.records.toArray();
    return Object.fromEntries(
      all
        .sort((a, b) => `${a.collection}/${a.id}`.localeCompare(`${b.collection}/${b.id}`))
        .map((r) => [
          `${r.collection}/${r.id}`,
          {
            version: r.version,
            deleted: r.deleted,
            fields: r.fields,
            conflicts: [...r.conflicts].sort(),
          },
        ]),
    );
  }

  /**
   * The app reloaded: this engine stops and its database connection closes; a new tablet object
   * opens the same database with a new engine (same device, people and options).
   */
  async reload(): Promise<SimTablet> {
    this.engine.stop();
    const dbName = this.db.name;
    this.db.close();
    const next = new SimTablet(this.name, this.clinic, this.device, this.people, {
      ...this.options,
      dbName,
    });
    await next.engine.loadPersistedStatus();
    return next;
  }

  async close(): Promise<void> {
    this.engine.stop();
    this.db.close();
    await this.db.delete();
  }
}
