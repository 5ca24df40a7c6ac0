// fast-check properties over random edit schedules and network faults, asserting guarantees 1–5 of
// docs/sync-protocol.md with three simulated tablets (real engine, real server, real PostgreSQL),
// spread over two server instances on the one database, as a clinic's several server processes.
import { jsonEqual, type ConflictItem, type PushResult } from '@fuselight/shared';
import type { OutboxEntry } from '@pwa/data/db';
import type { TestDevice, TestUser } from '@server/testing/identity-factory';
import { startVersionsBelowPowerOfTen, versionLengths } from '@server/testing/version-boundary';
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startClinic, type Clinic } from '../harness/clinic-server';
import { expectConverged } from '../harness/convergence';
import type { Fault } from '../harness/faulty-network';
import { databaseSnapshot, firstSyncThroughPull } from '../harness/server-records';
import { deskToken, listConflicts, serverSnapshot } from '../harness/server-view';
import { SimTablet } from '../harness/sim-tablet';

const TABLETS = 3;
const PATIENTS = 2;
const FIELDS = ['givenName', 'familyName', 'notes'] as const;
/** Pull page sizes the tablets use, small so a first sync spans many pages. */
const PAGE_LIMITS = [1, 2, 7, 50] as const;

type Op =
  | { kind: 'edit'; tablet: number; patient: number; field: (typeof FIELDS)[number]; value: string }
  | { kind: 'delete'; tablet: number; patient: number }
  | {
      kind: 'edit-while-syncing';
      tablet: number;
      patient: number;
      field: (typeof FIELDS)[number];
      value: string;
      waitMs: number;
      fault: Fault;
    }
  | { kind: 'sync'; tablet: number; fault: Fault }
  | { kind: 'sync-together'; a: number; b: number; faultA: Fault; faultB: Fault }
  | { kind: 'network'; tablet: number; offline: boolean };

const faultArb: fc.Arbitrary<Fault> = fc.oneof(
  { weight: 4, arbitrary: fc.constant<Fault>({ kind: 'deliver' }) },
  fc.constant<Fault>({ kind: 'drop' }),
  fc.constant<Fault>({ kind: 'lose-reply' }),
  fc.constant<Fault>({ kind: 'duplicate' }),
  fc.constant<Fault>({ kind: 'replay-later' }),
  fc.constant<Fault>({ kind: 'gateway-error' }),
  fc.integer({ min: 1, max: 30 }).map<Fault>((ms) => ({ kind: 'delay', ms })),
);
const tabletArb = fc.integer({ min: 0, max: TABLETS - 1 });
const opArb: fc.Arbitrary<Op> = fc.oneof(
  {
    weight: 5,
    arbitrary: fc.record({
      kind: fc.constant('edit' as const),
      tablet: tabletArb,
      patient: fc.integer({ min: 0, max: PATIENTS - 1 }),
      field: fc.constantFrom(...FIELDS),
      value: fc.constantFrom('Ada', 'Bea', 'Cai'),
    }),
  },
  {
    weight: 3,
    arbitrary: fc.record({
      kind: fc.constant('edit-while-syncing' as const),
      tablet: tabletArb,
      patient: fc.integer({ min: 0, max: PATIENTS - 1 }),
      field: fc.constantFrom(...FIELDS),
      value: fc.constantFrom('Dee', 'Eli'),
      waitMs: fc.integer({ min: 0, max: 25 }),
      fault: faultArb,
    }),
  },
  {
    weight: 1,
    arbitrary: fc.record({
      kind: fc.constant('delete' as const),
      tablet: tabletArb,
      patient: fc.integer({ min: 0, max: PATIENTS - 1 }),
    }),
  },
  {
    weight: 4,
    arbitrary: fc.record({
      kind: fc.constant('sync' as const),
      tablet: tabletArb,
      fault: faultArb,
    }),
  },
  {
    weight: 2,
    arbitrary: fc.record({
      kind: fc.constant('sync-together' as const),
      a: tabletArb,
      b: tabletArb,
      faultA: faultArb,
      faultB: faultArb,
    }),
  },
  {
    weight: 1,
    arbitrary: fc.record({
      kind: fc.constant('network' as const),
      tablet: tabletArb,
      offline: fc.boolean(),
    }),
  },
);

let clinic: Clinic;
let people: TestUser[];
let devices: TestDevice[];
let supervisorToken: string;
let run = 0;

beforeAll(async () => {
  clinic = await startClinic({ processes: 2 });
  people = [];
  devices = [];
  for (let i = 0; i < TABLETS; i += 1) {
    people.push(await clinic.person('orthoptist'));
    devices.push(await clinic.device());
  }
  supervisorToken = await deskToken(clinic, await clinic.person('supervisor'));
  // A patient from before, then versions just below a power of ten: the first runs cross into
  // one digit more, and the tablets of every run first-sync through records of both lengths
  // (other test files use transaction ids too, so the crossing may come before the first run).
  const before = new SimTablet('before', clinic, devices[0]!, [people[0]!]);
  await before.create('patient', {
    siteId: clinic.siteId,
    givenName: 'Before',
    familyName: 'Boundary',
    dateOfBirth: '2014-04-04',
    clinicNumber: 'B-0',
  });
  expect((await before.syncUntilSettled()).kind).toBe('synced');
  await before.close();
  await startVersionsBelowPowerOfTen(clinic.t.db.url, { transactionsBefore: 20 });
});

afterAll(async () => {
  await clinic?.close();
});

interface Ack {
  tablet: number;
  entry: OutboxEntry;
  result: PushResult;
}

async function runSchedule(ops: Op[]): Promise<void> {
  run += 1;
  const tablets = devices.map(
    (device, i) =>
      new SimTablet(`p${run}-${i}`, clinic, device, [people[i] as TestUser, ...people], {
        pageLimit: PAGE_LIMITS[(run + i) % PAGE_LIMITS.length]!,
        baseUrl: clinic.baseUrls[i % clinic.baseUrls.length]!,
      }),
  );
  try {
    // Two patients everyone holds before the schedule starts.
    const ids: string[] = [];
    for (let p = 0; p < PATIENTS; p += 1) {
      ids.push(
        await tablets[0]!.create('patient', {
          siteId: clinic.siteId,
          givenName: 'Start',
          familyName: `Run${run}`,
          dateOfBirth: '2015-05-05',
          clinicNumber: `R${run}-${p}`,
        }),
      );
    }
    for (const t of tablets) expect((await t.syncUntilSettled()).kind).toBe('synced');

    const seenChangeIds = tablets.map(() => new Set<string>());
    const noteOutbox = async (i: number) => {
      for (const entry of await tablets[i]!.entries()) seenChangeIds[i]!.add(entry.changeId);
    };

    for (const op of ops) {
      clinic.t.clock.advance(1_000);
      switch (op.kind) {
        case 'edit':
          await tablets[op.tablet]!.update('patient', ids[op.patient]!, { [op.field]: op.value });
          await noteOutbox(op.tablet);
          break;
        case 'delete':
          await tablets[op.tablet]!.remove('patient', ids[op.patient]!);
          await noteOutbox(op.tablet);
          break;
        case 'edit-while-syncing': {
          const t = tablets[op.tablet]!;
          t.network.plan({ kind: 'deliver' }, op.fault);
          await Promise.all([
            t.sync(),
            (async () => {
              await new Promise((resolve) => setTimeout(resolve, op.waitMs));
              await t.update('patient', ids[op.patient]!, { [op.field]: op.value });
            })(),
          ]);
          await noteOutbox(op.tablet);
          break;
        }
        case 'sync':
          tablets[op.tablet]!.network.plan(op.fault);
          await tablets[op.tablet]!.sync();
          await noteOutbox(op.tablet);
          break;
        case 'sync-together':
          tablets[op.a]!.network.plan(op.faultA);
          if (op.b !== op.a) tablets[op.b]!.network.plan(op.faultB);
          await Promise.all([tablets[op.a]!.sync(), op.b === op.a ? null : tablets[op.b]!.sync()]);
          await noteOutbox(op.a);
          await noteOutbox(op.b);
          break;
        case 'network':
          tablets[op.tablet]!.network.offline = op.offline;
          break;
      }
      // On every tablet, a field with a pending edit shows that edit (the latest entry holding
      // it), whatever a pull brought in meanwhile.
      for (const t of tablets) {
        const entries = await t.entries();
        for (const entry of entries) {
          const record = await t.get(entry.collection, entry.recordId);
          const names = [
            ...Object.keys(entry.fields),
            ...(entry.deleted === undefined ? [] : ['deleted']),
          ];
          for (const name of names) {
            expect(record?.pendingFields, `${t.name}: queued ${name} not marked pending`).toContain(
              name,
            );
          }
        }
        for (const record of await t.db.records.toArray()) {
          for (const field of record.pendingFields) {
            const holder = entries
              .filter(
                (e) =>
                  e.recordId === record.id &&
                  (field === 'deleted' ? e.deleted !== undefined : field in e.fields),
              )
              .at(-1);
            expect(holder, `${t.name}: ${field} pending without an Outbox entry`).toBeDefined();
            const shown = field === 'deleted' ? record.deleted : record.fields[field];
            const queued = field === 'deleted' ? holder!.deleted : holder!.fields[field];
            expect(shown, `${t.name}: pending ${field} overwritten`).toEqual(queued);
          }
        }
      }
    }

    // Everyone stops editing; the network heals; old copies still in flight arrive.
    for (const t of tablets) {
      t.network.offline = false;
      t.network.setChooser(() => ({ kind: 'deliver' }));
      await t.network.flushReplays();
    }
    // Guarantee 1, convergence (and 4: every tablet pulled incrementally, the server view is read
    // from its tables, so a change skipped behind a cursor would show as a difference).
    await expectConverged(clinic, tablets);

    const token = await tablets[0]!.auth.tokenFor(people[0]!.id);
    // The server's records as its tables hold them, and as a first sync through pull sees them:
    // each once, in ascending numeric order, whatever the page size.
    const server = await databaseSnapshot(clinic);
    expect(await serverSnapshot(clinic, token!)).toEqual(server);
    for (const limit of PAGE_LIMITS) {
      const pulled = await firstSyncThroughPull(clinic, token!, limit);
      expect(pulled.map((r) => r.key).sort()).toEqual(Object.keys(server).sort());
      const versions = pulled.map((r) => r.version);
      expect(versions).toEqual([...versions].sort((a, b) => a - b));
    }
    const acks: Ack[] = tablets.flatMap((t, i) => t.acks.map((ack) => ({ tablet: i, ...ack })));

    // Guarantee 3, exactly once: every answer for one change id is the same answer.
    const firstAnswer = new Map<string, PushResult>();
    for (const { result } of acks) {
      const first = firstAnswer.get(result.changeId);
      if (!first) {
        firstAnswer.set(result.changeId, result);
        continue;
      }
      expect({ ...result, replayed: undefined }).toEqual({ ...first, replayed: undefined });
      expect(result.replayed).toBe(true);
    }

    // Guarantee 5, nothing dropped from an Outbox: each entry a tablet ever held was answered by
    // the server, or is still there (rejected, for its author).
    for (let i = 0; i < TABLETS; i += 1) {
      const remaining = new Set((await tablets[i]!.entries()).map((e) => e.changeId));
      for (const changeId of seenChangeIds[i]!) {
        expect(
          firstAnswer.has(changeId) || remaining.has(changeId),
          `tablet ${i} lost ${changeId}`,
        ).toBe(true);
      }
      expect((await tablets[i]!.entries()).filter((e) => e.state === 'pending')).toEqual([]);
    }

    // Guarantee 2, nothing acknowledged is lost.
    const accepted = [...firstAnswer.values()]
      .filter((result) => result.status !== 'rejected')
      .map((result) => acks.find((ack) => ack.result.changeId === result.changeId) as Ack);
    const conflictsByRecord = new Map<string, ConflictItem[]>();
    for (const id of ids) {
      conflictsByRecord.set(id, await listConflicts(clinic, supervisorToken, { recordId: id }));
    }
    const valuesOf = (entry: OutboxEntry): Array<[string, unknown]> => [
      ...Object.entries(entry.fields),
      ...(entry.deleted === undefined
        ? []
        : ([['deleted', entry.deleted]] as Array<[string, unknown]>)),
    ];
    for (const x of accepted) {
      if (x.result.status === 'rejected') continue;
      const xVersion = x.result.version;
      const record = server[`patient/${x.entry.recordId}`];
      expect(record).toBeDefined();
      for (const [field, value] of valuesOf(x.entry)) {
        const current = field === 'deleted' ? record!.deleted : record!.fields[field];
        if (jsonEqual(current, value)) continue;
        const candidate = (conflictsByRecord.get(x.entry.recordId) ?? []).some(
          (c) => c.field === field && c.candidates.some((cand) => jsonEqual(cand.value, value)),
        );
        if (candidate) continue;
        // "Overwritten by a change whose baseVersion showed it had seen that value": the value,
        // not necessarily x's write of it. A write equal to the value already held (merge rule
        // 2) leaves the field's stamp with the write that set it first, so a later edit that saw
        // that first write — or came from its device — replaces the value by rule 1.
        const writesOfValue = accepted.filter(
          (z) =>
            z.result.status !== 'rejected' &&
            z.entry.recordId === x.entry.recordId &&
            z.result.version <= xVersion &&
            valuesOf(z.entry).some(([f, v]) => f === field && jsonEqual(v, value)),
        );
        const overwrittenBySomeoneWhoSawIt = accepted.some(
          (y) =>
            y.result.status !== 'rejected' &&
            y.entry.recordId === x.entry.recordId &&
            valuesOf(y.entry).some(([f]) => f === field) &&
            y.result.version > xVersion &&
            writesOfValue.some(
              (z) =>
                z.result.status !== 'rejected' &&
                (y.entry.baseVersion >= z.result.version ||
                  (y.entry.deviceId === z.entry.deviceId && y.entry.hlc > z.entry.hlc)),
            ),
        );
        expect(
          overwrittenBySomeoneWhoSawIt,
          `acknowledged ${field}=${JSON.stringify(value)} of ${x.entry.changeId} was lost`,
        ).toBe(true);
      }
    }
  } finally {
    for (const t of tablets) await t.close();
  }
}

describe('guarantees over random schedules of edits and network faults', () => {
  it('converge, lose no acknowledged value, apply each change once, skip nothing and drop no entry', async () => {
    await fc.assert(
      fc.asyncProperty(fc.array(opArb, { minLength: 4, maxLength: 24 }), runSchedule),
      { numRuns: Number(process.env.FUSELIGHT_PROPERTY_RUNS ?? 12), endOnFailure: true },
    );
    // The runs did cross the power of ten: the server holds versions of two lengths.
    const versions = Object.values(await databaseSnapshot(clinic)).map((r) => r.version);
    expect(versionLengths(versions).length).toBeGreaterThanOrEqual(2);
  });
});
