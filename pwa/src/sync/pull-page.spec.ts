// The pull page reader: as strict as pullResponseSchema about every envelope, and a malformed
// page costs the tablet nothing (no record of it written, the cursor where it was). The engine
// runs against a scripted fetch here because the real server never sends a malformed page.
import { pullResponseSchema, type PulledRecord } from '@fuselight/shared';
import { afterEach, describe, expect, it } from 'vitest';
import { FuselightDb } from '../data/db';
import { RecordsRepository } from '../data/records-repository';
import { CLINICIAN_ID, DEVICE_ID, OTHER_CLINICIAN_ID, patientFields } from '../data/test-fixtures';
import { readCursor } from './local-apply';
import { PullPageError, readPullResponse } from './pull-page';
import { SyncEngine } from './sync-engine';

const dbs: FuselightDb[] = [];
afterEach(async () => {
  for (const db of dbs.splice(0)) {
    db.close();
    await db.delete();
  }
});

function pulled(index: number, overrides: Partial<PulledRecord> = {}): PulledRecord {
  const id = `0190c6d1-0000-7000-8000-${String(index).padStart(12, '0')}`;
  return {
    collection: 'patient',
    id,
    version: index,
    deleted: false,
    fields: patientFields({ familyName: `Okafor${index}`, clinicNumber: `FL-${index}` }),
    stamps: {
      familyName: {
        hlc: `${String(1_764_576_000_000 + index).padStart(15, '0')}-00000-${DEVICE_ID}`,
        version: index,
        by: CLINICIAN_ID,
        device: DEVICE_ID,
      },
    },
    conflicts: [],
    ...overrides,
  };
}

function page(records: unknown[], cursor = records.length, more = false) {
  return { records, cursor, more };
}

/** A page changed in one place, through JSON (as the engine receives it). */
function mutated(change: (body: Record<string, unknown>) => void): unknown {
  const body = JSON.parse(JSON.stringify(page([pulled(1), pulled(2)]))) as Record<string, unknown>;
  change(body);
  return JSON.parse(JSON.stringify(body));
}

const record = (body: Record<string, unknown>, index = 1) =>
  (body.records as Array<Record<string, unknown>>)[index] as Record<string, unknown>;

const cases: Array<[string, (body: Record<string, unknown>) => void, string | null]> = [
  ['a well-formed page', () => undefined, null],
  ['a reset', (body) => Object.assign(body, { reset: true, records: undefined }), null],
  ['an empty last page', (body) => Object.assign(body, { records: [], cursor: 0 }), null],
  ['records that are not a list', (body) => (body.records = {}), 'records'],
  ['no cursor', (body) => delete body.cursor, 'cursor'],
  ['a negative cursor', (body) => (body.cursor = -1), 'cursor'],
  ['a fractional cursor', (body) => (body.cursor = 1.5), 'cursor'],
  ['more as a string', (body) => (body.more = 'no'), 'more'],
  ['a record that is a list', (body) => ((body.records as unknown[])[1] = []), 'records.1'],
  [
    'a collection that is not a name',
    (body) => (record(body).collection = 7),
    'records.1.collection',
  ],
  ['an empty collection', (body) => (record(body).collection = ''), 'records.1.collection'],
  ['an id that is not a UUID', (body) => (record(body).id = 'patient-2'), 'records.1.id'],
  ['a negative version', (body) => (record(body).version = -2), 'records.1.version'],
  ['a version as a string', (body) => (record(body).version = '2'), 'records.1.version'],
  ['deleted as a number', (body) => (record(body).deleted = 0), 'records.1.deleted'],
  ['fields that are a list', (body) => (record(body).fields = []), 'records.1.fields'],
  ['fields that are null', (body) => (record(body).fields = null), 'records.1.fields'],
  ['no stamps', (body) => delete record(body).stamps, 'records.1.stamps'],
  [
    'a stamp whose hlc is not a stamp',
    (body) => ((record(body).stamps as Record<string, { hlc: string }>).familyName!.hlc = 'soon'),
    'records.1.stamps.familyName.hlc',
  ],
  [
    'a stamp with no author',
    (body) => ((record(body).stamps as Record<string, { by: string }>).familyName!.by = ''),
    'records.1.stamps.familyName.by',
  ],
  [
    'a conflict that is not a field name',
    (body) => (record(body).conflicts = [3]),
    'records.1.conflicts.0',
  ],
  [
    'field values of every JSON kind',
    (body) => (record(body).fields = { a: null, b: [1, { c: 'd' }], e: true, f: 1.25 }),
    null,
  ],
];

describe('reading a pull page', () => {
  it.each(cases)('agrees with pullResponseSchema on %s', (_name, change, refusedAt) => {
    const json = mutated(change);
    const byZod = pullResponseSchema.safeParse(json).success;
    let refused: PullPageError | null = null;
    try {
      readPullResponse(json);
    } catch (error) {
      if (!(error instanceof PullPageError)) throw error;
      refused = error;
    }
    expect(refused === null).toBe(byZod);
    expect(refused?.path ?? null).toBe(refusedAt);
  });

  it('returns the parsed records themselves and the greatest stamp of the page', () => {
    const records = [pulled(1), pulled(3), pulled(2)];
    const json = page(records, 3);
    const read = readPullResponse(json);
    if ('reset' in read) throw new Error('read a reset');
    expect(read.records).toBe(json.records);
    expect(read.greatestStamp).toBe(records[1]!.stamps.familyName!.hlc);
    expect(read.cursor).toBe(3);
  });

  it('names the field in its message', () => {
    expect(() =>
      readPullResponse(mutated((body) => (record(body).collection = 'drop table'))),
    ).toThrow(
      'records.1.collection: collection must be a name of letters and digits, not "drop table"',
    );
  });

  it('reads a record of a collection, or with a field, this build does not know, and names them', () => {
    // The shared schema (this build's view of protocol 1) refuses it; the tablet keeps it.
    const json = mutated((body) => {
      record(body, 0).fields = { ...(record(body, 0).fields as object), eyePreference: 'left' };
      record(body).collection = 'orthoptistNote';
    });
    expect(pullResponseSchema.safeParse(json).success).toBe(false);
    const read = readPullResponse(json);
    if ('reset' in read) throw new Error('read a reset');
    expect(read.records).toHaveLength(2);
    expect(read.newer).toEqual({
      collections: ['orthoptistNote'],
      fields: { patient: ['eyePreference'] },
    });
    const known = readPullResponse(mutated(() => undefined));
    expect('reset' in known ? 'reset' : known.newer).toBeNull();
  });
});

describe('a pull with a malformed page', () => {
  /** An engine whose pulls get `pages` in turn; only the clinician has a session to push with. */
  function engineWith(pages: unknown[]) {
    const db = new FuselightDb(`pull-page-${crypto.randomUUID()}`);
    dbs.push(db);
    const requested: string[] = [];
    const engine = new SyncEngine({
      db,
      baseUrl: 'http://clinic.invalid',
      auth: {
        tokenFor: async (userId) => (userId === CLINICIAN_ID ? 'token' : null),
        onUnauthorized: async () => undefined,
      },
      deviceId: DEVICE_ID,
      pullAs: () => CLINICIAN_ID,
      fetch: async (input) => {
        requested.push(String(input));
        const body = pages[Math.min(requested.length - 1, pages.length - 1)];
        return new Response(JSON.stringify(body), { status: 200 });
      },
      timers: { setTimeout: () => null, clearTimeout: () => undefined },
      network: { isOnline: () => true, subscribe: () => () => undefined },
      chunkSize: 2,
      yieldToUi: () => Promise.resolve(),
    });
    return { db, engine, requested };
  }

  it('keeps the pages before it, writes nothing of it, and says where it is wrong', async () => {
    const first = page([pulled(1), pulled(2), pulled(3)], 3, true);
    // The bad record is the last of its page: its first chunk would be well-formed.
    const second = page([pulled(4), pulled(5), { ...pulled(6), id: 'not-a-uuid' }], 6, true);
    const { db, engine } = engineWith([first, second]);

    const outcome = await engine.syncOnce();

    expect(outcome.kind).toBe('failed');
    expect(outcome.kind === 'failed' && outcome.message).toContain(
      'records.2.id: id must be a UUID',
    );
    expect(await db.records.count()).toBe(3);
    // The search holds the three stored patients and none of the refused page.
    const found = await new RecordsRepository(db).searchPatients('okafor');
    expect(found.map((patient) => patient.fields.familyName).sort()).toEqual([
      'Okafor1',
      'Okafor2',
      'Okafor3',
    ]);
    expect(await readCursor(db)).toBe(3);
  });

  it('never overwrites a pending local edit, and indexes what it pulled for search', async () => {
    const pages: unknown[] = [];
    const { db, engine } = engineWith(pages);
    const records = new RecordsRepository(db);
    // An edit whose author has no session now: it waits in the Outbox while the pull runs.
    const mine = await records.create('patient', patientFields({ familyName: 'Lindqvist' }), {
      authorId: OTHER_CLINICIAN_ID,
      deviceId: DEVICE_ID,
      nowMs: Date.now(),
    });
    const fromServer = pulled(2, {
      id: mine,
      fields: patientFields({ familyName: 'Lindgren', clinicNumber: 'FL-2' }),
    });
    pages.push(page([pulled(1), fromServer, pulled(3)], 3, false));

    const outcome = await engine.syncOnce();

    expect(outcome).toMatchObject({ kind: 'synced', pulled: 3 });
    const stored = await db.records.get(['patient', mine] as unknown as string);
    expect(stored?.fields.familyName).toBe('Lindqvist');
    expect(stored?.serverFields.familyName).toBe('Lindgren');
    expect(stored?.version).toBe(2);
    expect(await db.outbox.count()).toBe(1);
    expect((await records.searchPatients('lindqvist')).map((p) => p.id)).toEqual([mine]);
    expect(await records.searchPatients('lindgren')).toEqual([]);
    expect((await records.searchPatients('okafor3')).length).toBe(1);
  });
});
