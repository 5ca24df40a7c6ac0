// Records a device does not know (docs/sync-protocol.md): an older build keeps a record of a
// collection, or with a field, it does not know exactly as it came, keeps pulling, says an update
// is available, and never pushes such a record back altered; after the update the records are
// there without a pull. The "older build" is this build's registry with the motility Section and
// the patient's notes left out; the pull answers are made by hand (the real server only sends
// collections its shared schema knows).
import { COLLECTIONS, recordSchemas, sectionRecordId, type PulledRecord } from '@fuselight/shared';
import { afterEach, describe, expect, it } from 'vitest';
import { FuselightDb } from '../data/db';
import { RecordsRepository } from '../data/records-repository';
import {
  CLINICIAN_ID,
  DEVICE_ID,
  OTHER_CLINICIAN_ID,
  SITE_ID,
  patientFields,
  visitFields,
} from '../data/test-fixtures';
import { readCursor } from './local-apply';
import {
  NEWER_RECORDS_KEY,
  THIS_BUILD,
  buildSchemaOf,
  describeNewerRecords,
  reviewNewerRecords,
  type BuildSchema,
} from './newer-records';
import { SyncEngine } from './sync-engine';

const dbs: FuselightDb[] = [];
afterEach(async () => {
  for (const db of dbs.splice(0)) {
    db.close();
    await db.delete();
  }
});

/** This build's record schemas without some collections and fields: an older build. */
function buildWithout(collections: string[], fields: Record<string, string[]>): BuildSchema {
  return buildSchemaOf(
    Object.fromEntries(
      COLLECTIONS.filter((collection) => !collections.includes(collection)).map((collection) => [
        collection,
        Object.keys(recordSchemas[collection].shape).filter(
          (field) => !(fields[collection] ?? []).includes(field),
        ),
      ]),
    ),
  );
}

const OLDER_BUILD = buildWithout(['motility'], { patient: ['notes'] });
const OTHER_DEVICE = '0190c6a0-0000-7000-8000-0000000de0f2';

// Versions of different lengths, as a clinic's cross a power of ten.
const VERSIONS = [999_998_001, 999_999_002, 1_000_000_001, 1_000_000_002, 1_000_001_003];

function stampsOf(fields: Record<string, unknown>, version: number) {
  return Object.fromEntries(
    Object.keys(fields).map((field) => [
      field,
      {
        hlc: `${String(1_764_576_000_000 + (version % 1000)).padStart(15, '0')}-00000-${OTHER_DEVICE}`,
        version,
        by: CLINICIAN_ID,
        device: OTHER_DEVICE,
      },
    ]),
  );
}

function pulled(
  collection: string,
  id: string,
  version: number,
  fields: Record<string, unknown>,
): PulledRecord {
  return {
    collection: collection as PulledRecord['collection'],
    id,
    version,
    deleted: false,
    fields: fields as PulledRecord['fields'],
    stamps: stampsOf(fields, version),
    conflicts: [],
  };
}

const patientId = '0190c6d1-0000-7000-8000-000000000b01';
const visitId = '0190c6d1-0000-7000-8000-000000000c01';
const motilityId = sectionRecordId(visitId, 'motility');
// A collection no build of this repository knows.
const futureId = '0190c6d1-0000-7000-8000-000000000f01';

const patientFromNewerBuild = () =>
  pulled(
    'patient',
    patientId,
    VERSIONS[0]!,
    patientFields({
      notes: 'Prefers the left chair; wears an eye patch at school',
      // A field no build of this repository knows.
      preferredEye: { eye: 'left', since: '2026-11' },
    }),
  );
const visit = () => pulled('visit', visitId, VERSIONS[1]!, visitFields(patientId));
const motility = () =>
  pulled('motility', motilityId, VERSIONS[2]!, {
    siteId: SITE_ID,
    patientId,
    visitId,
    rightUp: 0,
    rightUpRight: -1,
    leftDownLeft: 2,
    headPosture: 'Chin up 10°',
    notes: 'Left superior oblique overaction',
  });
const future = () =>
  pulled('orthopticExercise', futureId, VERSIONS[3]!, {
    siteId: SITE_ID,
    patientId,
    visitId,
    exercise: { name: 'Pencil push-ups', timesADay: 3 },
    startedOn: '2026-12-01',
  });

/** A clinic server made of pages, by the cursor they follow; pushes are kept and answered. */
function scriptedServer(pages: Map<number, unknown>) {
  const pulls: number[] = [];
  const pushes: Array<{ changes: Array<Record<string, unknown>> }> = [];
  let nextVersion = 2_000_000_001;
  const fetch: typeof globalThis.fetch = async (input, init) => {
    const url = new URL(String(input));
    if (url.pathname === '/api/sync/pull') {
      const after = Number(url.searchParams.get('after'));
      pulls.push(after);
      const page = pages.get(after) ?? { records: [], cursor: after, more: false };
      return new Response(JSON.stringify(page), { status: 200 });
    }
    const body = JSON.parse(String(init?.body)) as { changes: Array<Record<string, unknown>> };
    pushes.push(body);
    return new Response(
      JSON.stringify({
        results: body.changes.map((change) => ({
          changeId: change.changeId,
          status: 'applied',
          version: (nextVersion += 1),
          conflicts: [],
        })),
        serverTime: '2026-12-01T09:30:00.000Z',
      }),
      { status: 200 },
    );
  };
  return { fetch, pulls, pushes };
}

function engineOn(
  db: FuselightDb,
  fetch: typeof globalThis.fetch,
  build: BuildSchema,
  /** The people with a session (default: everyone). */
  signedIn: string[] | null = null,
) {
  return new SyncEngine({
    db,
    baseUrl: 'http://clinic.invalid',
    auth: {
      tokenFor: async (userId) => (signedIn === null || signedIn.includes(userId) ? 'token' : null),
      onUnauthorized: async () => undefined,
    },
    deviceId: DEVICE_ID,
    pullAs: () => CLINICIAN_ID,
    fetch,
    timers: { setTimeout: () => null, clearTimeout: () => undefined },
    network: { isOnline: () => true, subscribe: () => () => undefined },
    chunkSize: 2,
    yieldToUi: () => Promise.resolve(),
    build,
  });
}

function database(): FuselightDb {
  const db = new FuselightDb(`newer-records-${crypto.randomUUID()}`);
  dbs.push(db);
  return db;
}

const key = (collection: string, id: string) => [collection, id] as unknown as string;

describe('a tablet on an older build', () => {
  it('keeps records it does not know exactly as they came, keeps pulling, and says an update is available', async () => {
    const db = database();
    const first = [patientFromNewerBuild(), visit(), motility()];
    const second = [future()];
    const server = scriptedServer(
      new Map<number, unknown>([
        [0, { records: first, cursor: VERSIONS[2], more: true }],
        [VERSIONS[2]!, { records: second, cursor: VERSIONS[3], more: false }],
      ]),
    );
    const engine = engineOn(db, server.fetch, OLDER_BUILD);

    const outcome = await engine.syncOnce();

    expect(outcome).toEqual({ kind: 'synced', pushed: 0, rejected: 0, pulled: 4 });
    expect(server.pulls).toEqual([0, VERSIONS[2]]);
    expect(await readCursor(db)).toBe(VERSIONS[3]);
    // Each record as it came: every field, known or not, with its value.
    for (const record of [...first, ...second]) {
      const stored = await db.records.get(key(record.collection, record.id));
      expect(stored).toMatchObject({
        collection: record.collection,
        id: record.id,
        version: record.version,
        deleted: false,
        pendingFields: [],
        serverFields: {},
      });
      expect(stored?.fields).toEqual(record.fields);
    }
    expect(engine.snapshot().newerRecords).toEqual({
      collections: ['motility', 'orthopticExercise'],
      fields: { patient: ['notes', 'preferredEye'] },
      firstSeenAt: expect.any(Number) as number,
    });
    expect(engine.snapshot().error).toBeNull();
    expect(describeNewerRecords(engine.snapshot().newerRecords)).toBe(
      'An update of Fuselight is available. This tablet has received 2 kinds of record and new ' +
        'details in Patient details from a newer version of the app that this version cannot ' +
        'show yet. They are kept exactly as they came and nothing is lost; syncing goes on. ' +
        'Update the app to see them.',
    );

    // The next sync goes on from the cursor, and the note is still there after a restart.
    await engine.syncOnce();
    expect(server.pulls).toEqual([0, VERSIONS[2], VERSIONS[3]]);
    const restarted = engineOn(db, server.fetch, OLDER_BUILD);
    await restarted.loadPersistedStatus();
    expect(restarted.snapshot().newerRecords?.collections).toEqual([
      'motility',
      'orthopticExercise',
    ]);
  });

  it('pushes only the known fields a person changed, and never drops or rewrites the fields it does not know', async () => {
    const db = database();
    const server = scriptedServer(
      new Map<number, unknown>([
        [0, { records: [patientFromNewerBuild(), visit()], cursor: VERSIONS[1], more: false }],
      ]),
    );
    const engine = engineOn(db, server.fetch, OLDER_BUILD);
    await engine.syncOnce();
    const ctx = { authorId: OTHER_CLINICIAN_ID, deviceId: DEVICE_ID, nowMs: Date.now() };
    const records = new RecordsRepository(db);

    await records.update('patient', patientId, { familyName: 'Okafor-Bell' }, ctx);

    const [entry] = await db.outbox.toArray();
    expect(entry?.fields).toEqual({ familyName: 'Okafor-Bell' });
    const edited = await db.records.get(key('patient', patientId));
    expect(edited?.fields).toEqual(
      patientFields({
        familyName: 'Okafor-Bell',
        notes: 'Prefers the left chair; wears an eye patch at school',
        preferredEye: { eye: 'left', since: '2026-11' },
      }),
    );
    // A field this build does not know cannot be written by it: the edit is refused, by name.
    await expect(
      records.update('patient', patientId, { preferredEye: 'right' } as never, ctx),
    ).rejects.toThrow(/preferredEye/);
    // Nor can a record of a collection it does not know be edited at all.
    await expect(
      records.update(
        'orthopticExercise' as never,
        futureId,
        { startedOn: '2026-12-02' } as never,
        ctx,
      ),
    ).rejects.toThrow(/orthopticExercise/);

    // While the edit waits, another tablet on the newer build changes the notes: the pull brings
    // it in, and the pending known field stays the person's.
    const changedNotes = pulled(
      'patient',
      patientId,
      VERSIONS[4]!,
      patientFields({
        notes: 'Patch on the right eye from December',
        preferredEye: { eye: 'right', since: '2026-12' },
      }),
    );
    const later = scriptedServer(
      new Map<number, unknown>([
        [VERSIONS[1]!, { records: [changedNotes], cursor: VERSIONS[4], more: false }],
      ]),
    );
    // The edit's author has no session on this sync, so it waits in the Outbox while the pull runs.
    await engineOn(db, later.fetch, OLDER_BUILD, [CLINICIAN_ID]).syncOnce();
    expect(later.pushes).toHaveLength(0);
    const merged = await db.records.get(key('patient', patientId));
    expect(merged?.fields.notes).toBe('Patch on the right eye from December');
    expect(merged?.fields.preferredEye).toEqual({ eye: 'right', since: '2026-12' });
    expect(merged?.fields.familyName).toBe('Okafor-Bell');
    expect(merged?.pendingFields).toEqual(['familyName']);

    // The author signs in again: the edit goes out.
    await engineOn(db, later.fetch, OLDER_BUILD).syncOnce();

    expect(later.pushes).toHaveLength(1);
    const [pushed] = later.pushes[0]!.changes;
    expect(pushed).toMatchObject({
      collection: 'patient',
      recordId: patientId,
      fields: { familyName: 'Okafor-Bell' },
    });
    expect(Object.keys(pushed!.fields as object)).toEqual(['familyName']);
    expect(server.pushes).toHaveLength(0);
    const settled = await db.records.get(key('patient', patientId));
    expect(settled?.pendingFields).toEqual([]);
    expect(settled?.fields).toEqual(
      patientFields({
        familyName: 'Okafor-Bell',
        notes: 'Patch on the right eye from December',
        preferredEye: { eye: 'right', since: '2026-12' },
      }),
    );
    expect(await db.outbox.count()).toBe(0);
  });

  it('after the app updates, the records are there and readable without a pull, and the note goes', async () => {
    const db = database();
    const server = scriptedServer(
      new Map<number, unknown>([
        [
          0,
          {
            records: [patientFromNewerBuild(), visit(), motility(), future()],
            cursor: VERSIONS[3],
            more: false,
          },
        ],
      ]),
    );
    await engineOn(db, server.fetch, OLDER_BUILD).syncOnce();
    expect(server.pulls).toEqual([0]);

    // A newer build: knows motility but not yet the patient's notes.
    const partly = engineOn(db, server.fetch, buildWithout([], { patient: ['notes'] }));
    await partly.loadPersistedStatus();
    expect(partly.snapshot().newerRecords).toMatchObject({
      collections: ['orthopticExercise'],
      fields: { patient: ['notes', 'preferredEye'] },
    });

    // This build (which knows motility and notes, not the invented collection).
    const updated = engineOn(db, server.fetch, THIS_BUILD);
    await updated.loadPersistedStatus();
    expect(updated.snapshot().newerRecords).toMatchObject({
      collections: ['orthopticExercise'],
      fields: { patient: ['preferredEye'] },
    });
    // A build that knows everything it holds: the note is gone, from memory and from the database.
    const complete = buildSchemaOf({
      ...Object.fromEntries(
        COLLECTIONS.map((collection) => [collection, Object.keys(recordSchemas[collection].shape)]),
      ),
      patient: [...Object.keys(recordSchemas.patient.shape), 'preferredEye'],
      orthopticExercise: ['siteId', 'patientId', 'visitId', 'exercise', 'startedOn'],
    });
    expect(await reviewNewerRecords(db, complete)).toBeNull();
    expect(await db.meta.get(NEWER_RECORDS_KEY)).toBeUndefined();

    // No pull happened since the first: what the screens read was stored by the older build.
    expect(server.pulls).toEqual([0]);
    const records = new RecordsRepository(db);
    const sections = await records.listByField('motility', 'visitId', visitId);
    expect(sections.map((section) => section.fields)).toEqual([motility().fields]);
    expect((await records.get('patient', patientId))?.fields.notes).toBe(
      'Prefers the left chair; wears an eye patch at school',
    );
    // The newer build edits them like any record it pulled itself.
    await records.update(
      'motility',
      motilityId,
      { rightUp: -1 },
      {
        authorId: CLINICIAN_ID,
        deviceId: DEVICE_ID,
        nowMs: Date.now(),
      },
    );
    expect((await db.outbox.toArray()).map((entry) => [entry.baseVersion, entry.fields])).toEqual([
      [VERSIONS[2], { rightUp: -1 }],
    ]);
  });

  it('says nothing while every record it pulls is known', async () => {
    const db = database();
    const server = scriptedServer(
      new Map<number, unknown>([[0, { records: [visit()], cursor: VERSIONS[1], more: false }]]),
    );
    const engine = engineOn(db, server.fetch, OLDER_BUILD);
    await engine.syncOnce();
    expect(engine.snapshot().newerRecords).toBeNull();
    expect(await db.meta.get(NEWER_RECORDS_KEY)).toBeUndefined();
    expect(describeNewerRecords(null)).toBeNull();
  });
});
