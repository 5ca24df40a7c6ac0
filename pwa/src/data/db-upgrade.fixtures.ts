// One fixture database for every Dexie schema version the tablet ever shipped (db.ts,
// DEXIE_SCHEMA_HISTORY), for db-upgrade.spec.ts: each is written with that version's own store
// declarations and rows in the shape that version stored, then opened with the current build,
// and every row must come through field by field. The rows are data that has lived: a few hundred
// records of several collections, tombstones, pending edits with the server's values kept aside,
// open disputes, records from a newer build (a collection and a field no build here knows), and an
// Outbox of pending, sent, refused, delete and restore entries from two people, with versions on
// both sides of a power of ten.
//
// Adding a schema version: add its declaration to DEXIE_SCHEMA_HISTORY and one entry here (what
// it stores, and, if its upgrade changes rows, what the older fixtures read back as).
import type { MetaEntry, OutboxEntry, StoredRecord } from './db';

export type FixtureRow = Record<string, unknown>;
export type FixtureTables = Record<string, FixtureRow[]>;

export interface DexieUpgradeFixture {
  /** The schema version this database was written with. */
  version: number;
  /** What the tables held, in that version's shape (a table of that version may be included). */
  stored: (lived: LivedTables) => FixtureTables;
  /** What the current build reads back, per table (the current tables only). */
  expected: (lived: LivedTables) => FixtureTables;
}

/** The tablet's data as the current build keeps it. */
export interface LivedTables {
  records: StoredRecord[];
  outbox: OutboxEntry[];
  meta: MetaEntry[];
}

const SITES = ['0190c6a0-0000-7000-8000-00000000a001', '0190c6a0-0000-7000-8000-00000000a002'];
const AUTHORS = ['0190c6a0-0000-7000-8000-00000000d001', '0190c6a0-0000-7000-8000-00000000d002'];
const DEVICE = '0190c6a0-0000-7000-8000-0000000de001';
const GIVEN = ['Amara', 'Zoë', 'Tomás', 'Ngozi', 'Li', 'Siobhán', 'Kwame', 'Aleksandra'];
const FAMILY = ['Okafor', 'Lindqvist', 'Ó Briain', 'Nakamura-Whitfield', 'Ng', 'Adeyemi-Brooks'];

/** A UUID of the v7 layout with a counter in its last group. */
function uuid(group: string, n: number): string {
  return `0190c6a1-${group}-7000-8000-${n.toString(16).padStart(12, '0')}`;
}

/** Versions start just below a power of ten, as a clinic's cross one. */
const version = (n: number) => 999_999_000 + n * 7;

const hlc = (n: number) =>
  `${String(1_764_576_000_000 + n * 1_013).padStart(15, '0')}-00000-${DEVICE}`;

function record(
  collection: string,
  id: string,
  n: number,
  fields: Record<string, unknown>,
  extra: Partial<StoredRecord> = {},
): StoredRecord {
  return {
    collection: collection as StoredRecord['collection'],
    id,
    version: version(n),
    deleted: false,
    fields,
    conflicts: [],
    pendingFields: [],
    serverFields: {},
    updatedAt: 1_764_576_000_000 + n,
    ...extra,
  };
}

/** The same data for every fixture: built fresh each time so no test can change another's. */
export function livedTables(): LivedTables {
  const records: StoredRecord[] = [];
  const outbox: OutboxEntry[] = [];
  let n = 0;
  for (let p = 0; p < 60; p += 1) {
    n += 1;
    const siteId = SITES[p % 2]!;
    const patientId = uuid('0001', p);
    const given = GIVEN[p % GIVEN.length]!;
    const family = FAMILY[p % FAMILY.length]!;
    const pending = p % 9 === 0;
    records.push(
      record(
        'patient',
        patientId,
        n,
        {
          siteId,
          givenName: pending ? `${given} Jr` : given,
          familyName: family,
          dateOfBirth: `20${String(10 + (p % 12)).padStart(2, '0')}-0${1 + (p % 9)}-1${p % 10}`,
          clinicNumber: `FL-${String(p * 37).padStart(p % 3 === 0 ? 6 : 4, '0')}`,
          sex: p % 2 === 0 ? 'female' : 'male',
          notes:
            p % 5 === 0 ? 'Wears glasses full time; patching two hours a day. '.repeat(4) : null,
        },
        {
          deleted: p === 59,
          pendingFields: pending ? ['givenName'] : [],
          serverFields: pending ? { givenName: given } : {},
        },
      ),
    );
    for (let v = 0; v < 2; v += 1) {
      n += 1;
      const visitId = uuid('0002', p * 2 + v);
      const disputed = p % 13 === 0 && v === 0;
      records.push(
        record(
          'visit',
          visitId,
          n,
          {
            siteId,
            patientId,
            date: `2026-${String(1 + ((p + v) % 12)).padStart(2, '0')}-0${1 + v}`,
            clinicianId: AUTHORS[v]!,
            status: v === 0 ? 'signed' : 'draft',
            reason: disputed ? 'Headaches when reading' : 'Review of intermittent exotropia',
          },
          { conflicts: disputed ? ['reason'] : [] },
        ),
      );
      n += 1;
      records.push(
        record('coverTest', uuid('0003', p * 2 + v), n, {
          siteId,
          patientId,
          visitId,
          correctionWorn: v === 0 ? 'yes' : 'no',
          nearFinding: p % 3 === 0 ? 'tropia' : 'phoria',
          nearHorizontalDirection: 'exo',
          nearControl: p % 4 === 0 ? 'poor' : 'good',
          distanceFinding: 'orthophoria',
        }),
      );
      if (p % 4 === 0) {
        n += 1;
        records.push(
          record('motility', uuid('0004', p * 2 + v), n, {
            siteId,
            patientId,
            visitId,
            rightUp: 0,
            leftDownLeft: p % 8 === 0 ? 2 : -1,
            headPosture: 'Chin up 10°',
          }),
        );
      }
    }
  }
  // Records from a newer build: kept as they came by every version.
  n += 1;
  records.push(
    record('orthopticExercise', uuid('0005', 1), n, {
      siteId: SITES[0],
      patientId: uuid('0001', 1),
      exercise: { name: 'Pencil push-ups', timesADay: 3 },
    }),
  );
  n += 1;
  records.push(
    record('patient', uuid('0001', 999), n, {
      siteId: SITES[0],
      givenName: 'Ruth',
      familyName: 'Abernethy',
      dateOfBirth: '2019-02-28',
      clinicNumber: 'FL-9',
      preferredEye: { eye: 'left', since: '2026-11' },
    }),
  );
  // A record made here and not yet acknowledged (version 0).
  const madeHere = uuid('0001', 1000);
  records.push(
    record(
      'patient',
      madeHere,
      0,
      {
        siteId: SITES[1],
        givenName: 'Iris',
        familyName: 'Mbeki',
        dateOfBirth: '2020-06-01',
        clinicNumber: 'FL-10000',
      },
      {
        version: 0,
        pendingFields: ['siteId', 'givenName', 'familyName', 'dateOfBirth', 'clinicNumber'],
      },
    ),
  );

  // The Outbox: entries in creation order, every kind the tablet makes.
  const kinds = ['edit', 'sent', 'refused', 'delete', 'restore', 'create'] as const;
  for (let e = 0; e < 42; e += 1) {
    const kind = kinds[e % kinds.length]!;
    const seq = e + 1;
    const target = kind === 'create' ? madeHere : uuid('0002', e);
    const entry: OutboxEntry = {
      changeId: uuid('000e', seq),
      seq,
      collection: kind === 'create' ? 'patient' : 'visit',
      recordId: target,
      baseVersion: kind === 'create' ? 0 : version(e),
      hlc: hlc(seq),
      fields:
        kind === 'delete' || kind === 'restore'
          ? {}
          : kind === 'create'
            ? { givenName: 'Iris', familyName: 'Mbeki' }
            : { reason: `Follow-up ${e}: near point receding` },
      authorId: AUTHORS[e % 2]!,
      deviceId: DEVICE,
      createdAt: 1_764_600_000_000 + seq * 1_000,
      updatedAt: 1_764_600_000_000 + seq * 1_000 + (kind === 'refused' ? 500 : 0),
      state: kind === 'refused' ? 'rejected' : 'pending',
      error: kind === 'refused' ? 'Reason: must be at most 500 characters' : null,
      attempts: kind === 'sent' ? 2 : kind === 'refused' ? 1 : 0,
    };
    if (kind === 'delete') entry.deleted = true;
    if (kind === 'restore') entry.deleted = false;
    outbox.push(entry);
  }

  const meta: MetaEntry[] = [
    { key: 'pullCursor', value: 1_000_000_002_001 },
    { key: 'outboxSeq', value: outbox.length },
    { key: 'hlc', value: { deviceId: DEVICE, wallMs: 1_764_600_099_000, counter: 3 } },
    { key: 'lastSyncedAt', value: 1_764_600_100_000 },
    {
      key: 'fullRepull',
      value: {
        reason: 'cursor-epoch',
        startedAt: 1_764_500_000_000,
        finishedAt: 1_764_500_090_000,
        received: 412,
      },
    },
    {
      key: 'newerRecords',
      value: {
        collections: ['orthopticExercise'],
        fields: { patient: ['preferredEye'] },
        firstSeenAt: 1_764_590_000_000,
      },
    },
  ];
  return { records, outbox, meta };
}

const rows = <T extends object>(list: readonly T[]) =>
  list.map((row) => ({ ...row }) as FixtureRow);

/** The current tables, as the current build reads them back. */
function unchanged(lived: LivedTables): FixtureTables {
  return { records: rows(lived.records), outbox: rows(lived.outbox), meta: rows(lived.meta) };
}

/** What the current build holds: the same rows, and (from version 5) no key slot yet. */
function current(lived: LivedTables): FixtureTables {
  return { ...unchanged(lived), keySlots: [] };
}

/** The search rows versions 2 and 3 kept beside the patients (dropped by version 4). */
function searchRows(lived: LivedTables, withSite: boolean): FixtureRow[] {
  return lived.records
    .filter((record) => record.collection === 'patient' && !record.deleted)
    .map((patient) => {
      const terms = [
        patient.fields.givenName,
        patient.fields.familyName,
        patient.fields.clinicNumber,
      ].map((term) => String(term).toLowerCase());
      return withSite
        ? { id: patient.id, terms, siteId: patient.fields.siteId }
        : { id: patient.id, terms };
    });
}

export const DEXIE_UPGRADE_FIXTURES: readonly DexieUpgradeFixture[] = [
  {
    // Version 1: Outbox entries without a creation order, device id or change time, and
    // `deleted: false` on every edit; records without the server's values kept aside.
    version: 1,
    stored: (lived) => ({
      records: lived.records.map((record) => {
        const { serverFields: _kept, ...asVersion1 } = record;
        return asVersion1;
      }),
      outbox: lived.outbox.map((entry) => {
        const { seq: _seq, deviceId: _device, updatedAt: _updated, ...asVersion1 } = entry;
        return { ...asVersion1, deleted: entry.deleted === true };
      }),
      meta: rows(lived.meta.filter((entry) => entry.key !== 'outboxSeq')),
    }),
    expected: (lived) => ({
      // Version 1 never kept the server's values of pending fields: they start empty.
      records: lived.records.map((record) => ({ ...record, serverFields: {} })),
      outbox: lived.outbox.map((entry) => {
        // A version 1 restore was indistinguishable from a plain edit: it leaves the tombstone.
        const { deleted, ...rest } = entry;
        return {
          ...rest,
          updatedAt: entry.createdAt,
          ...(deleted === true ? { deleted: true } : {}),
        };
      }),
      meta: rows(lived.meta),
      keySlots: [],
    }),
  },
  {
    version: 2,
    stored: (lived) => ({ ...unchanged(lived), patientSearch: searchRows(lived, true) }),
    expected: current,
  },
  {
    version: 3,
    stored: (lived) => ({ ...unchanged(lived), patientSearch: searchRows(lived, false) }),
    expected: current,
  },
  { version: 4, stored: unchanged, expected: current },
  // Version 5 (key slots of a protected tablet): a database not yet sealed reads back as it is;
  // sealing in place is tested in pwa/src/auth/protected-tablet.spec.ts.
  { version: 5, stored: current, expected: current },
];
