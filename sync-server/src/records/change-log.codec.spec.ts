// The change log's encoding (change-log.codec.ts) must stand for exactly the answers and audit
// facts given: decoding what was encoded, after the JSON round trip PostgreSQL receives, gives
// the entries back, whatever mix of statuses, sites, kinds and collections a push holds.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { PushResult } from '@fuselight/shared';
import {
  decodeChangeLog,
  encodeChangeLog,
  type ChangeLogEntry,
  type EncodedChangeLog,
} from './change-log.codec';

const SITES = ['0190c6a0-0000-7000-8000-00000000000a', '0190c6a0-0000-7000-8000-00000000000b'];

const accepted: fc.Arbitrary<ChangeLogEntry> = fc
  .record({
    changeId: fc.uuid(),
    status: fc.constantFrom('applied', 'merged', 'conflict') as fc.Arbitrary<
      'applied' | 'merged' | 'conflict'
    >,
    version: fc.integer({ min: 1, max: Number.MAX_SAFE_INTEGER }),
    conflicts: fc.uniqueArray(fc.constantFrom('notes', 'prism', 'deleted'), { maxLength: 2 }),
    recordId: fc.option(fc.uuid(), { nil: null }),
    audit: fc.option(
      fc.record({
        id: fc.uuid(),
        kind: fc.constantFrom('record.created', 'record.changed', 'record.deleted'),
        siteId: fc.constantFrom(...SITES),
        collection: fc.constantFrom('patient', 'visit', 'letter'),
        fields: fc.uniqueArray(fc.constantFrom('notes', 'prism', 'deleted', 'siteId'), {
          maxLength: 4,
        }),
      }),
      { nil: undefined },
    ),
  })
  .map(({ changeId, status, version, conflicts, recordId, audit }) => {
    const result: PushResult = { changeId, status, version, conflicts };
    return audit ? { result, recordId, audit } : { result, recordId };
  });

const rejected: fc.Arbitrary<ChangeLogEntry> = fc
  .record({
    changeId: fc.uuid(),
    error: fc.string({ minLength: 1 }),
    recordId: fc.option(fc.uuid(), { nil: null }),
  })
  .map(({ changeId, error, recordId }) => ({
    result: { changeId, status: 'rejected', error } as PushResult,
    recordId,
  }));

const viaJson = (log: EncodedChangeLog): EncodedChangeLog =>
  JSON.parse(JSON.stringify(log)) as EncodedChangeLog;

describe('change log codec', () => {
  it('decodes to exactly the entries encoded, through JSON', () => {
    fc.assert(
      fc.property(fc.array(fc.oneof(accepted, rejected), { maxLength: 12 }), (entries) => {
        expect(decodeChangeLog(viaJson(encodeChangeLog(entries)))).toEqual(entries);
      }),
      { numRuns: 300 },
    );
  });

  it('binds the first audited entry’s kind, site and collection once and sends only differences', () => {
    const a = '0190c6a0-0000-7000-8000-0000000000a1';
    const log = encodeChangeLog([
      {
        result: { changeId: 'c1', status: 'rejected', error: 'fields.notes: too long' },
        recordId: null,
      },
      {
        result: { changeId: 'c2', status: 'applied', version: 9, conflicts: [] },
        recordId: 'r2',
        audit: {
          id: a,
          kind: 'record.created',
          siteId: SITES[0]!,
          collection: 'patient',
          fields: ['notes'],
        },
      },
      {
        result: { changeId: 'c3', status: 'conflict', version: 10, conflicts: ['notes'] },
        recordId: 'r3',
        audit: {
          id: a,
          kind: 'record.changed',
          siteId: SITES[0]!,
          collection: 'visit',
          fields: ['notes'],
        },
      },
    ]);
    expect(log.shared).toEqual({ kind: 'record.created', siteId: SITES[0], collection: 'patient' });
    expect(log.rows).toEqual([
      { c: 'c1', s: 'rejected', r: null, e: 'fields.notes: too long' },
      { c: 'c2', s: 'applied', v: 9, r: 'r2', a, f: ['notes'] },
      {
        c: 'c3',
        s: 'conflict',
        v: 10,
        r: 'r3',
        k: ['notes'],
        a,
        f: ['notes'],
        n: 'record.changed',
        o: 'visit',
      },
    ]);
  });
});
