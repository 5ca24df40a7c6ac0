// The patient search: every non-deleted patient's search terms, held in memory beside the patient
// record itself, so that a keystroke is answered without an IndexedDB read. It replaces the
// persisted search table of schema versions 2 and 3, whose rows made a first sync write about
// 40% more index entries, and whose reply came a task later than the keystroke.
//
// Why whole records and not only ids + a bulkGet of the results: both were measured in Chromium
// with 20,000 patients (scripts/bench-ui.mjs, a shared 2-core machine). Ids only: ≈ 4 MB of JS
// heap, but each keystroke still reads its ≤ 30 records from IndexedDB and the browser paints a
// frame before the reply, 7–8 ms from keystroke to rows, 2.0–2.2× the bare indexed query. Whole
// records: ≈ 9 MB, 3–4 ms, under 1×. A mid-range tablet has gigabytes of memory, and the 5 MB
// difference (a clinic's patients are small records) is nothing beside a search that lags a
// frame at every keystroke; so the directory answers from memory.
//
// How it stays true to the database, per FuselightDb instance:
// - loaded from the patient records themselves (their [collection+id] range), in chunks with a
//   yield between them, the first time a search needs it or when a screen warms it up;
// - a Dexie middleware on this connection sees every put and delete of the records table and
//   applies the patient ones when their transaction commits (before the code that awaited the
//   transaction carries on), so a write through any repository or a stored pull page is
//   searchable at once; an aborted transaction changes nothing;
// - a write this connection did not make (another tab, another connection) is seen through
//   Dexie's storage-mutated event and makes the directory load again;
// - closing the database (sign-out erasure, a version change, a test) drops it from memory.
// A search issued while the directory is loading waits for the load: it is never answered from
// a half-built directory.
import Dexie, {
  type DBCore,
  type DBCoreMutateRequest,
  type DBCoreMutateResponse,
  type DBCoreTable,
  type DBCoreTransaction,
  type Middleware,
  type ObservabilitySet,
} from 'dexie';
import type { FuselightDb, StoredRecord } from './db';
import { patientSiteId, patientTerms } from './patient-terms';

/**
 * Patient records read per load step; each step is one IndexedDB read and the making of its
 * entries, then the screen gets the main thread back. The step's size follows the time the last
 * step's entries took to make (from the read's reply on: the wait for IndexedDB blocks nothing).
 * The browser's decoding of the records read (in the task that delivers them) and Dexie's own
 * work come on top, unmeasured, and dominate: in a trace of the benchmark's 20,000 patients, a
 * step of 200 records was a task of about 20 ms, nearly all of it outside JavaScript. So the
 * budget is 1 ms and a step at most 100 records:
 * a step's task stays near 10 ms on the benchmark's machine, under the 50 ms of a long task on a
 * tablet four times slower (a long task delays a tap; Lighthouse counts it).
 * bench:ui prints the load's time and its long tasks; Lighthouse counts each in blocking time.
 */
const FIRST_CHUNK = 50;
const MIN_CHUNK = 25;
const MAX_CHUNK = 100;
const STEP_BUDGET_MS = 1;
/** Main-thread time of one slice of the sorting that follows the reads. */
const SORT_SLICE_MS = 4;
/** Entries whose terms are sorted natively as one run, before the runs are merged. */
const RUN_ENTRIES = 250;

/** The next step's size from the last one's (making its entries took `tookMs`). */
export function nextChunkSize(size: number, tookMs: number): number {
  if (tookMs > STEP_BUDGET_MS) return Math.max(MIN_CHUNK, Math.floor(size / 2));
  if (tookMs < STEP_BUDGET_MS / 2) return Math.min(MAX_CHUNK, Math.ceil(size * 1.5));
  return size;
}

/** Up to this many terms, a change is spliced into the sorted arrays instead of copied. */
const SPLICE_LIMIT = 32;

export interface PatientEntry {
  id: string;
  siteId: string | null;
  terms: string[];
  record: StoredRecord;
}

/** What one transaction did to patients: the record now held, or null for gone. */
type PendingChanges = Map<string, StoredRecord | null>;

interface Pending {
  generation: number;
  changes: PendingChanges;
  /** A range was deleted (a table cleared): load again instead. */
  reload: boolean;
}

export interface DirectorySearch {
  limit: number;
  siteId?: string;
}

export interface DirectoryStats {
  /** Patients held. */
  patients: number;
  /** Terms held (entries of the sorted term array). */
  terms: number;
  /** Time spent applying committed writes, since this database was opened here. */
  applyMs: number;
  /** Duration of the last completed load, or null before one. */
  lastLoadMs: number | null;
}

function compare(termA: string, idA: string, termB: string, idB: string): number {
  if (termA < termB) return -1;
  if (termA > termB) return 1;
  if (idA < idB) return -1;
  if (idA > idB) return 1;
  return 0;
}

function yieldToScreen(): Promise<void> {
  const scheduler = (globalThis as { scheduler?: { yield?: () => Promise<void> } }).scheduler;
  if (typeof scheduler?.yield === 'function') return scheduler.yield();
  return new Promise<void>((resolve) => setTimeout(resolve, 0));
}

function isPatientKey(key: unknown): key is ['patient', string] {
  return Array.isArray(key) && key[0] === 'patient' && typeof key[1] === 'string';
}

export class PatientDirectory {
  private state: 'idle' | 'loading' | 'ready' = 'idle';
  /** Bumped by every reset: a load or a commit of an older generation changes nothing. */
  private generation = 0;
  private loading: Promise<void> | null = null;
  private byId = new Map<string, PatientEntry>();
  /** Every (term, patient) pair, sorted by term then id: the order IndexedDB keys sort in. */
  private terms: string[] = [];
  private owners: PatientEntry[] = [];
  /** Ids written by a commit while loading: a chunk read must not bring back an older value. */
  private writtenWhileLoading = new Set<string>();
  /** Ids written by a commit while the load sorts what it read (null when not sorting). */
  private changedWhileSorting: Set<string> | null = null;
  private readonly pending = new WeakMap<object, Pending>();
  /** The mutated-parts sets of this connection's own transactions (already applied). */
  private readonly ownParts = new WeakSet<object>();
  private listening = false;
  private applyMs = 0;
  private lastLoadMs: number | null = null;

  constructor(private readonly db: FuselightDb) {}

  /** Starts loading in the background, if not loaded yet (a failure is left for a search). */
  warm(): void {
    this.whenReady().catch(() => undefined);
  }

  /** Main-thread time of one slice of the load's sort (a test makes it 0: one piece a slice). */
  sortSliceMs = SORT_SLICE_MS;

  /** Where the directory is: nothing held, reading the records, sorting their terms, ready. */
  get phase(): 'idle' | 'reading' | 'sorting' | 'ready' {
    if (this.state !== 'loading') return this.state;
    return this.changedWhileSorting ? 'sorting' : 'reading';
  }

  /** True once every patient is held and searches are answered at once. */
  get isReady(): boolean {
    return this.state === 'ready';
  }

  stats(): DirectoryStats {
    return {
      patients: this.byId.size,
      terms: this.terms.length,
      applyMs: this.applyMs,
      lastLoadMs: this.lastLoadMs,
    };
  }

  /**
   * Patients with a term starting with the first word, and for every further word a term
   * starting with it; each once, in the order of their first matching term (then id), at most
   * `limit`, optionally of one site only. Waits for the directory to be loaded.
   */
  async search(words: readonly string[], options: DirectorySearch): Promise<StoredRecord[]> {
    await this.whenReady();
    return this.find(words, options);
  }

  /** Resolves once loaded; starts the load if nothing has yet. */
  async whenReady(): Promise<void> {
    // A reset (the database closed, or a write from elsewhere) during a load makes that load
    // give up; the next one starts here.
    while (this.state !== 'ready') {
      this.loading ??= this.load(this.generation);
      await this.loading;
    }
  }

  /** Forgets everything held; the next search loads again. */
  reset(): void {
    this.generation += 1;
    this.state = 'idle';
    this.loading = null;
    this.byId = new Map();
    this.terms = [];
    this.owners = [];
    this.writtenWhileLoading = new Set();
    this.changedWhileSorting = null;
    this.stopListening();
  }

  private find(words: readonly string[], options: DirectorySearch): StoredRecord[] {
    const [first, ...rest] = words;
    const found: StoredRecord[] = [];
    if (first === undefined || options.limit <= 0) return found;
    const seen = new Set<PatientEntry>();
    const terms = this.terms;
    const owners = this.owners;
    for (let i = this.lowerBound(first, '', 0); i < terms.length; i += 1) {
      if (!(terms[i] as string).startsWith(first)) break;
      const owner = owners[i] as PatientEntry;
      if (seen.has(owner)) continue;
      seen.add(owner);
      if (options.siteId !== undefined && owner.siteId !== options.siteId) continue;
      if (!rest.every((word) => owner.terms.some((term) => term.startsWith(word)))) continue;
      found.push(owner.record);
      if (found.length === options.limit) break;
    }
    return found;
  }

  /** First position from `low` on whose (term, id) is not before the given one. */
  private lowerBound(term: string, id: string, low: number): number {
    let high = this.terms.length;
    while (low < high) {
      const mid = (low + high) >>> 1;
      if (compare(this.terms[mid] as string, (this.owners[mid] as PatientEntry).id, term, id) < 0) {
        low = mid + 1;
      } else {
        high = mid;
      }
    }
    return low;
  }

  // The load reads every patient in steps, then sorts their terms in slices (sortTerms): no
  // step or slice holds the main thread for long, and the work is O(n log n) over the load
  // instead of a copy of the growing arrays at every step. Until it is ready, byId is the
  // truth; a commit meanwhile changes byId (and, once the sort has begun, is applied to the
  // sorted arrays at the end).
  private async load(generation: number): Promise<void> {
    this.state = 'loading';
    this.startListening();
    const started = performance.now();
    try {
      let after: string | null = null;
      let size = FIRST_CHUNK;
      for (;;) {
        const lower: [string, unknown] = ['patient', after ?? Dexie.minKey];
        const chunk: StoredRecord[] = await this.db.records
          .where('[collection+id]')
          .between(lower, ['patient', Dexie.maxKey], after === null, true)
          .limit(size)
          .toArray();
        if (generation !== this.generation) return;
        const making = performance.now();
        for (const record of chunk) {
          if (this.writtenWhileLoading.has(record.id) || record.deleted) continue;
          this.byId.set(record.id, entryOf(record));
        }
        if (chunk.length < size) break;
        after = (chunk[chunk.length - 1] as StoredRecord).id;
        size = nextChunkSize(size, performance.now() - making);
        await yieldToScreen();
        if (generation !== this.generation) return;
      }

      const sorted = new Map(this.byId);
      const changedWhileSorting = new Set<string>();
      this.changedWhileSorting = changedWhileSorting;
      const sorting = sortTerms([...sorted.values()]);
      let step = sorting.next();
      while (!step.done) {
        await yieldToScreen();
        if (generation !== this.generation) return;
        const sliceStarted = performance.now();
        do step = sorting.next();
        while (!step.done && performance.now() - sliceStarted < this.sortSliceMs);
      }
      this.terms = step.value.terms;
      this.owners = step.value.owners;
      this.changedWhileSorting = null;
      const removed: PatientEntry[] = [];
      const added: PatientEntry[] = [];
      for (const id of changedWhileSorting) {
        const was = sorted.get(id);
        const now = this.byId.get(id);
        if (was === now) continue;
        if (was) removed.push(was);
        if (now) added.push(now);
      }
      this.remove(removed);
      this.insert(added);

      this.state = 'ready';
      this.writtenWhileLoading = new Set();
      this.lastLoadMs = performance.now() - started;
      measureLoad(started, this.byId.size);
    } catch (error) {
      if (generation === this.generation) this.reset();
      throw error;
    }
  }

  /** Applies what one committed transaction did to patients. */
  private apply(changes: PendingChanges): void {
    const started = performance.now();
    const loading = this.state === 'loading';
    const removed: PatientEntry[] = [];
    const added: PatientEntry[] = [];
    for (const [id, record] of changes) {
      const old = this.byId.get(id);
      if (old) {
        removed.push(old);
        this.byId.delete(id);
      }
      if (loading) {
        this.writtenWhileLoading.add(id);
        this.changedWhileSorting?.add(id);
      }
      if (record && !record.deleted) {
        const entry = entryOf(record);
        this.byId.set(id, entry);
        added.push(entry);
      }
    }
    // While loading, the sorted arrays are made at the load's end from byId.
    if (!loading) {
      this.remove(removed);
      this.insert(added);
    }
    this.applyMs += performance.now() - started;
  }

  // A few terms are spliced in or out (IndexedDB-like single writes); a batch (a sync page, a
  // load step) finds each of its positions by binary search and copies the runs between them
  // once, so a batch costs O(k log n + n) array moves and no per-element comparisons.

  private remove(entries: PatientEntry[]): void {
    const positions: number[] = [];
    for (const entry of entries) {
      for (const term of entry.terms) {
        const at = this.lowerBound(term, entry.id, 0);
        if (this.owners[at] === entry) positions.push(at);
      }
    }
    if (positions.length === 0) return;
    if (positions.length <= SPLICE_LIMIT) {
      positions.sort((a, b) => b - a);
      for (const at of positions) {
        this.terms.splice(at, 1);
        this.owners.splice(at, 1);
      }
      return;
    }
    positions.sort((a, b) => a - b);
    const termRuns: string[][] = [];
    const ownerRuns: PatientEntry[][] = [];
    let from = 0;
    for (const at of positions) {
      if (at > from) {
        termRuns.push(this.terms.slice(from, at));
        ownerRuns.push(this.owners.slice(from, at));
      }
      from = at + 1;
    }
    termRuns.push(this.terms.slice(from));
    ownerRuns.push(this.owners.slice(from));
    this.terms = ([] as string[]).concat(...termRuns);
    this.owners = ([] as PatientEntry[]).concat(...ownerRuns);
  }

  private insert(entries: PatientEntry[]): void {
    const pairs: Array<[string, PatientEntry]> = [];
    for (const entry of entries) for (const term of entry.terms) pairs.push([term, entry]);
    if (pairs.length === 0) return;
    if (pairs.length <= SPLICE_LIMIT) {
      for (const [term, entry] of pairs) {
        const at = this.lowerBound(term, entry.id, 0);
        this.terms.splice(at, 0, term);
        this.owners.splice(at, 0, entry);
      }
      return;
    }
    pairs.sort((a, b) => compare(a[0], a[1].id, b[0], b[1].id));
    // The runs of old entries between insertion points, and the new ones, joined natively.
    const termRuns: string[][] = [];
    const ownerRuns: PatientEntry[][] = [];
    let from = 0;
    for (const [term, entry] of pairs) {
      const at = this.lowerBound(term, entry.id, from);
      if (at > from) {
        termRuns.push(this.terms.slice(from, at));
        ownerRuns.push(this.owners.slice(from, at));
      }
      termRuns.push([term]);
      ownerRuns.push([entry]);
      from = at;
    }
    termRuns.push(this.terms.slice(from));
    ownerRuns.push(this.owners.slice(from));
    this.terms = ([] as string[]).concat(...termRuns);
    this.owners = ([] as PatientEntry[]).concat(...ownerRuns);
  }

  // Writes made elsewhere: Dexie announces every committed transaction's mutated parts, this
  // tab's and (through a BroadcastChannel) other tabs'. Those of this connection are already
  // applied; any other that touched this database's records makes the directory load again.
  private readonly onStorageMutated = (parts: ObservabilitySet): void => {
    if (this.ownParts.has(parts) || this.state === 'idle') return;
    const prefix = `idb://${this.db.name}/records/`;
    if (Object.keys(parts).some((part) => part.startsWith(prefix))) {
      this.reset();
      this.warm();
    }
  };

  private startListening(): void {
    if (this.listening) return;
    this.listening = true;
    Dexie.on('storagemutated', this.onStorageMutated);
  }

  private stopListening(): void {
    if (!this.listening) return;
    this.listening = false;
    Dexie.on.storagemutated.unsubscribe(this.onStorageMutated);
  }

  /** The Dexie middleware that feeds this directory every committed patient write. */
  middleware(): Middleware<DBCore> {
    return {
      stack: 'dbcore',
      name: 'PatientDirectory',
      create: (down) => ({
        ...down,
        transaction: (stores, mode, options) => {
          const trans = down.transaction(stores, mode, options);
          // Listening from the transaction's creation puts this listener before Dexie's own
          // completion handler, so the directory is current before anyone awaiting the
          // transaction carries on.
          if (mode === 'readwrite' && stores.includes('records')) this.watch(trans);
          return trans;
        },
        table: (name) => {
          const table = down.table(name);
          return name === 'records' ? this.recordsTable(table) : table;
        },
      }),
    };
  }

  private watch(trans: DBCoreTransaction): void {
    const target = trans as unknown as EventTarget & { mutatedParts?: ObservabilitySet };
    const settle = (committed: boolean) => () => {
      const parts = target.mutatedParts;
      if (parts) this.ownParts.add(parts);
      const pending = this.pending.get(trans);
      this.pending.delete(trans);
      if (!committed || !pending || pending.generation !== this.generation) return;
      if (this.state === 'idle') return;
      if (pending.reload) {
        this.reset();
        this.warm();
      } else {
        this.apply(pending.changes);
      }
    };
    target.addEventListener('complete', settle(true));
    target.addEventListener('abort', settle(false));
  }

  private recordsTable(table: DBCoreTable): DBCoreTable {
    return {
      ...table,
      mutate: (req) =>
        table.mutate(req).then((res) => {
          // While idle nothing is held: the next load reads what the transaction committed.
          if (this.state !== 'idle') this.note(req, res);
          return res;
        }),
    };
  }

  /** Remembers what a successful request did to patients, until its transaction settles. */
  private note(req: DBCoreMutateRequest, res: DBCoreMutateResponse): void {
    let pending = this.pending.get(req.trans);
    if (!pending || pending.generation !== this.generation) {
      pending = { generation: this.generation, changes: new Map(), reload: false };
      this.pending.set(req.trans, pending);
    }
    const changes = pending.changes;
    const failed = (index: number) => res.numFailures > 0 && res.failures[index] !== undefined;
    if (req.type === 'put' || req.type === 'add') {
      req.values.forEach((value: StoredRecord, index) => {
        if (value?.collection === 'patient' && !failed(index)) {
          // IndexedDB stored a copy of the value as it was when put; so does the directory.
          changes.set(value.id, structuredClone(value));
        }
      });
    } else if (req.type === 'delete') {
      req.keys.forEach((key: unknown, index) => {
        if (isPatientKey(key) && !failed(index)) changes.set(key[1], null);
      });
    } else {
      // A range deleted (a table cleared): load again once it has committed.
      pending.reload = true;
    }
  }
}

type TermPair = [term: string, owner: PatientEntry];

const comparePairs = (a: TermPair, b: TermPair) => compare(a[0], a[1].id, b[0], b[1].id);

/**
 * The sorted term and owner arrays of the given entries, made a little at a time: each `next()`
 * does a bounded piece (a run of RUN_ENTRIES entries sorted natively, up to 1,024 compared
 * elements of a merge, the copy of what is left of a merge's longer run, or 4,096 elements of
 * the final arrays), so the caller can give the screen the main thread back between slices. The
 * runs are merged pairwise, bottom up: O(n log n) in all.
 */
export function* sortTerms(
  entries: readonly PatientEntry[],
): Generator<void, { terms: string[]; owners: PatientEntry[] }> {
  let runs: TermPair[][] = [];
  for (let from = 0; from < entries.length; from += RUN_ENTRIES) {
    const run: TermPair[] = [];
    for (const entry of entries.slice(from, from + RUN_ENTRIES)) {
      for (const term of entry.terms) run.push([term, entry]);
    }
    run.sort(comparePairs);
    runs.push(run);
    yield;
  }
  while (runs.length > 1) {
    const merged: TermPair[][] = [];
    for (let r = 0; r + 1 < runs.length; r += 2) {
      const a = runs[r] as TermPair[];
      const b = runs[r + 1] as TermPair[];
      const out: TermPair[] = [];
      let i = 0;
      let j = 0;
      while (i < a.length && j < b.length) {
        const left = a[i] as TermPair;
        const right = b[j] as TermPair;
        if (comparePairs(left, right) <= 0) {
          out.push(left);
          i += 1;
        } else {
          out.push(right);
          j += 1;
        }
        if ((out.length & 1023) === 0) yield;
      }
      while (i < a.length) out.push(a[i++] as TermPair);
      while (j < b.length) out.push(b[j++] as TermPair);
      merged.push(out);
      yield;
    }
    if (runs.length % 2 === 1) merged.push(runs[runs.length - 1] as TermPair[]);
    runs = merged;
  }
  const all = runs[0] ?? [];
  const terms: string[] = [];
  const owners: PatientEntry[] = [];
  for (const [term, owner] of all) {
    terms.push(term);
    owners.push(owner);
    if ((terms.length & 4095) === 0) yield;
  }
  return { terms, owners };
}

function entryOf(record: StoredRecord): PatientEntry {
  return { id: record.id, siteId: patientSiteId(record), terms: patientTerms(record), record };
}

/** A User Timing entry for the load, for the developer tools and bench:ui. */
function measureLoad(started: number, patients: number): void {
  try {
    performance.measure('fuselight:patient-directory-load', {
      start: started,
      end: performance.now(),
      detail: { patients },
    });
  } catch {
    // User Timing with details is missing in some engines; the figure is only informative.
  }
}
