// The upsert's encoding (record-row.codec.ts) must stand for exactly the records given, whatever
// mix of shared and own values, stamp groups and stamp shapes a batch holds: decoding what was
// encoded, after the JSON round trip PostgreSQL receives, gives the records back.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { JsonValue } from '@fuselight/shared';
import {
  decodeRecordRows,
  encodeRecordRows,
  type EncodedRecordBatch,
  type RecordWrite,
} from './record-row.codec';
import type { StoredStamp } from './stored-record';

const COLLECTIONS = ['patient', 'visit', 'coverTest'];
const SITES = ['0190c6a0-0000-7000-8000-00000000000a', '0190c6a0-0000-7000-8000-00000000000b'];
const FIELD_NAMES = ['siteId', 'givenName', 'familyName', 'notes', 'deleted', 'prism'];
const WRITERS = [
  { by: '0190c6a0-0000-7000-8000-0000000000b1', device: '0190c6a0-0000-7000-8000-0000000000d1' },
  { by: '0190c6a0-0000-7000-8000-0000000000b2', device: 'server' },
];
const TIMES = ['2026-12-02T10:00:00.000Z', '2026-11-20T08:30:00.000Z'];

const json: fc.Arbitrary<JsonValue> = fc.oneof(
  fc.string(),
  fc.integer(),
  fc.boolean(),
  fc.constant(null),
  fc.array(fc.string(), { maxLength: 3 }),
  fc.dictionary(fc.constantFrom('a', 'b'), fc.integer()),
);

/** A stamp as stored: plain, without its time (written before stamps had one), or with more. */
const stamp: fc.Arbitrary<StoredStamp> = fc
  .record({
    hlc: fc
      .integer({ min: 0, max: 99_999 })
      .map((n) => `001796200000000-${String(n).padStart(5, '0')}-x`),
    version: fc.integer({ min: 1, max: 9_000_999 }),
    writer: fc.constantFrom(...WRITERS),
    at: fc.constantFrom(...TIMES),
    shape: fc.constantFrom('plain', 'plain', 'plain', 'legacy', 'extra'),
  })
  .map(({ hlc, version, writer, at, shape }): StoredStamp => {
    if (shape === 'legacy') return { hlc, version, ...writer } as StoredStamp;
    if (shape === 'extra') return { hlc, version, ...writer, at, note: 'kept' } as StoredStamp;
    return { hlc, version, ...writer, at };
  });

/** A record whose fields share a few stamp objects (one write stamps several fields). */
const record: fc.Arbitrary<RecordWrite> = fc
  .record({
    id: fc.uuid(),
    collection: fc.constantFrom(...COLLECTIONS),
    siteId: fc.constantFrom(...SITES),
    version: fc.integer({ min: 1, max: 9_000_999 }),
    deleted: fc.boolean(),
    fields: fc.dictionary(fc.constantFrom(...FIELD_NAMES), json, { maxKeys: 5 }),
    stamped: fc.uniqueArray(fc.constantFrom(...FIELD_NAMES), { maxLength: 6 }),
    stamps: fc.array(stamp, { minLength: 1, maxLength: 3 }),
    pick: fc.array(fc.nat(), { minLength: 6, maxLength: 6 }),
    wholeRecord: fc.boolean(),
  })
  .map(
    ({ id, collection, siteId, version, deleted, fields, stamped, stamps, pick, wholeRecord }) => {
      // A new record's single stamp covers exactly its fields; otherwise fields share stamps.
      const names = wholeRecord ? Object.keys(fields) : stamped;
      const byField: Record<string, StoredStamp> = {};
      names.forEach((field, index) => {
        byField[field] = wholeRecord ? stamps[0]! : stamps[(pick[index] ?? 0) % stamps.length]!;
      });
      return { id, collection, siteId, version, deleted, fields, stamps: byField };
    },
  );

const viaJson = (batch: EncodedRecordBatch): EncodedRecordBatch =>
  JSON.parse(JSON.stringify(batch)) as EncodedRecordBatch;

describe('record row codec', () => {
  it('decodes to exactly the records encoded, through JSON', () => {
    fc.assert(
      fc.property(fc.array(record, { maxLength: 8 }), (records) => {
        expect(decodeRecordRows(viaJson(encodeRecordRows(records)))).toEqual(records);
      }),
      { numRuns: 300 },
    );
  });

  it('sends a shared value once and a stamp of the batch’s writer as its hlc alone', () => {
    const fresh: StoredStamp = { hlc: 'h1', version: 7, ...WRITERS[0]!, at: TIMES[0]! };
    const older: StoredStamp = { hlc: 'h0', version: 3, ...WRITERS[1]!, at: TIMES[1]! };
    const batch = encodeRecordRows([
      {
        id: 'r1',
        collection: 'patient',
        siteId: SITES[0]!,
        version: 7,
        deleted: false,
        fields: { givenName: 'Ilse', notes: 'x' },
        stamps: { givenName: fresh, notes: fresh },
      },
      {
        id: 'r2',
        collection: 'visit',
        siteId: SITES[1]!,
        version: 7,
        deleted: true,
        fields: { notes: 'y', status: 'draft' },
        stamps: { notes: fresh, status: older },
      },
    ]);
    expect(batch.shared).toEqual({
      collection: 'patient',
      siteId: SITES[0],
      stamp: { by: WRITERS[0]!.by, device: WRITERS[0]!.device, at: TIMES[0] },
    });
    expect(batch.rows).toEqual([
      { id: 'r1', v: 7, f: { givenName: 'Ilse', notes: 'x' }, g: [['h1', null]] },
      {
        id: 'r2',
        v: 7,
        f: { notes: 'y', status: 'draft' },
        g: [
          ['h1', { notes: 0 }],
          [older, { status: 0 }],
        ],
        c: 'visit',
        s: SITES[1],
        d: true,
      },
    ]);
  });
});
