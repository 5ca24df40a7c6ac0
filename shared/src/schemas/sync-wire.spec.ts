import { describe, expect, it } from 'vitest';
import {
  conflictSchema,
  isPullReset,
  pullQuerySchema,
  pullResponseSchema,
  pushRequestSchema,
  pushRequestShapeSchema,
  pushResponseSchema,
  pushResultSchema,
  pushChangeFromJsonSchema,
  pushChangeSchema,
  resolveConflictRequestSchema,
  type PushChange,
} from './sync-wire.schema';
import { CHANGE_ID, RECORD_ID } from './test-ids.fixture';

const HLC = '001733011200000-00000-0190c6a0-0000-7000-8000-000000000001';

const change: PushChange = {
  changeId: CHANGE_ID,
  collection: 'patient',
  recordId: RECORD_ID,
  baseVersion: 0,
  hlc: HLC,
  fields: { familyName: 'Okafor', dateOfBirth: '2016-04-09' },
  deleted: false,
};

function push(changes: unknown[]) {
  return { protocol: 1, schemaVersion: 1, changes };
}

function messages(result: { success: boolean; error?: { issues: { message: string }[] } }) {
  return result.error?.issues.map((issue) => issue.message) ?? [];
}

describe('push request', () => {
  it('accepts the protocol example', () => {
    expect(pushRequestSchema.safeParse(push([change])).success).toBe(true);
  });

  it('accepts 500 changes and refuses 501', () => {
    const many = (n: number) => Array.from({ length: n }, () => change);
    expect(pushRequestSchema.safeParse(push(many(500))).success).toBe(true);
    const refused = pushRequestSchema.safeParse(push(many(501)));
    expect(messages(refused)).toEqual(['a push carries at most 500 changes']);
    expect(pushRequestShapeSchema.safeParse(push(many(501))).success).toBe(false);
  });

  it('refuses a stamp that is not <15 digits>-<5 digits>-<device>', () => {
    for (const hlc of [
      '1733011200000-00000-device',
      '001733011200000-0000-device',
      '001733011200000-00000-',
      '2026-12-01T09:30:00Z',
    ]) {
      const result = pushRequestSchema.safeParse(push([{ ...change, hlc }]));
      expect(messages(result), hlc).toEqual([
        'hlc must be a stamp <15-digit wall ms>-<5-digit counter>-<device id>',
      ]);
    }
  });

  it('refuses another protocol, a negative base version and an unknown collection', () => {
    expect(pushRequestSchema.safeParse({ ...push([change]), protocol: 2 }).success).toBe(false);
    expect(messages(pushRequestSchema.safeParse(push([{ ...change, baseVersion: -1 }])))).toEqual([
      'baseVersion cannot be negative',
    ]);
    expect(messages(pushRequestSchema.safeParse(push([{ ...change, baseVersion: 1.5 }])))).toEqual([
      'baseVersion must be a whole number',
    ]);
    expect(
      messages(pushRequestSchema.safeParse(push([{ ...change, collection: 'patients' }]))),
    ).toEqual(['unknown collection patients']);
  });

  it('refuses a change id that is not a UUID', () => {
    expect(messages(pushRequestSchema.safeParse(push([{ ...change, changeId: 'abc' }])))).toEqual([
      'changeId must be a UUID',
    ]);
  });

  it('refuses a field value JSON cannot carry', () => {
    const result = pushRequestSchema.safeParse(push([{ ...change, fields: { breakCm: NaN } }]));
    expect(result.success).toBe(false);
  });

  it('lets the shape check pass a change whose stamp is bad so that only that change is rejected', () => {
    const body = push([{ ...change, hlc: 'broken' }, change]);
    expect(pushRequestShapeSchema.safeParse(body).success).toBe(true);
    expect(pushRequestShapeSchema.safeParse(push([{ ...change, changeId: 7 }])).success).toBe(
      false,
    );
  });
});

describe('push response', () => {
  it('accepts applied, conflict and rejected results', () => {
    const response = {
      results: [
        { changeId: CHANGE_ID, status: 'applied', version: 4812, conflicts: [] },
        { changeId: CHANGE_ID, status: 'conflict', version: 4813, conflicts: ['dateOfBirth'] },
        { changeId: CHANGE_ID, status: 'rejected', error: 'Family name cannot be empty' },
        { changeId: CHANGE_ID, status: 'merged', version: 4814, conflicts: [], replayed: true },
      ],
      serverTime: '2026-12-01T09:30:00.000Z',
    };
    expect(pushResponseSchema.safeParse(response).success).toBe(true);
  });

  it('refuses a rejection without a reason and an accepted result without a version', () => {
    expect(pushResultSchema.safeParse({ changeId: CHANGE_ID, status: 'rejected' }).success).toBe(
      false,
    );
    expect(
      pushResultSchema.safeParse({ changeId: CHANGE_ID, status: 'applied', conflicts: [] }).success,
    ).toBe(false);
  });
});

describe('pull', () => {
  const page = {
    records: [
      {
        collection: 'patient',
        id: RECORD_ID,
        version: 4812,
        deleted: false,
        fields: { familyName: 'Okafor' },
        stamps: { familyName: { hlc: HLC, version: 4812, by: 'user-1', device: 'tablet-1' } },
        conflicts: [],
      },
    ],
    cursor: 4812,
    more: false,
  };

  it('accepts a page of records and a reset', () => {
    const parsed = pullResponseSchema.parse(page);
    expect(isPullReset(parsed)).toBe(false);
    expect(isPullReset(pullResponseSchema.parse({ reset: true }))).toBe(true);
  });

  it('refuses a stamp with a bad hlc and a reset that is false', () => {
    const badStamp = JSON.parse(JSON.stringify(page)) as typeof page;
    badStamp.records[0]!.stamps.familyName!.hlc = 'yesterday';
    expect(pullResponseSchema.safeParse(badStamp).success).toBe(false);
    expect(pullResponseSchema.safeParse({ reset: false }).success).toBe(false);
  });

  it('reads the query with defaults and limits', () => {
    expect(pullQuerySchema.parse({})).toEqual({ after: 0, limit: 500 });
    expect(pullQuerySchema.parse({ after: '4812', limit: '1000' })).toEqual({
      after: 4812,
      limit: 1000,
    });
    expect(messages(pullQuerySchema.safeParse({ limit: '1001' }))).toEqual([
      'limit must be between 1 and 1000',
    ]);
    expect(pullQuerySchema.safeParse({ after: '-1' }).success).toBe(false);
  });
});

describe('conflicts', () => {
  it('accepts the protocol example of an open conflict', () => {
    const item = {
      id: 'c-1',
      collection: 'patient',
      recordId: RECORD_ID,
      field: 'dateOfBirth',
      status: 'open',
      openedAt: '2026-12-01T09:31:02.000Z',
      provisional: '2016-04-19',
      candidates: [
        { value: '2016-04-09', hlc: HLC, by: 'u1', device: 'd1', version: 4813 },
        { value: '2016-04-19', hlc: HLC, by: 'u2', device: 'd2', version: 4815 },
      ],
    };
    expect(conflictSchema.safeParse(item).success).toBe(true);
  });

  it('requires a note saying why a conflict was resolved', () => {
    expect(
      resolveConflictRequestSchema.safeParse({ value: '2016-04-09', note: 'per birth certificate' })
        .success,
    ).toBe(true);
    expect(
      messages(resolveConflictRequestSchema.safeParse({ value: '2016-04-09', note: '   ' })),
    ).toEqual(['A note saying why is required']);
    expect(resolveConflictRequestSchema.safeParse({ value: '2016-04-09' }).success).toBe(false);
  });

  it('accepts null as the chosen value but not a missing value', () => {
    expect(resolveConflictRequestSchema.safeParse({ value: null, note: 'cleared' }).success).toBe(
      true,
    );
    expect(resolveConflictRequestSchema.safeParse({ note: 'cleared' }).success).toBe(false);
  });
});

describe('a change read from JSON', () => {
  // The server's check: the same envelope rules, with values left to each field's own schema.
  it('accepts what the strict change schema accepts and refuses the same envelope problems', () => {
    const read = JSON.parse(JSON.stringify(change)) as unknown;
    expect(pushChangeFromJsonSchema.safeParse(read)).toEqual(pushChangeSchema.safeParse(read));
    for (const broken of [
      { ...change, changeId: 'nope' },
      { ...change, collection: 'shoe' },
      { ...change, hlc: '12-3' },
      { ...change, baseVersion: -1 },
      { ...change, fields: [1, 2] },
      { ...change, fields: 'Okafor' },
    ]) {
      const strict = pushChangeSchema.safeParse(broken);
      const fromJson = pushChangeFromJsonSchema.safeParse(broken);
      expect(strict.success).toBe(false);
      expect(fromJson.success).toBe(false);
      expect(messages(fromJson)).toEqual(messages(strict));
    }
  });
});
