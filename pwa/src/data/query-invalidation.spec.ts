import { QueryClient } from '@tanstack/react-query';
import { describe, expect, it } from 'vitest';
import type { DataChange } from './data-events';
import { staleQueries } from './query-invalidation';
import { queryKeys } from './query-keys';

const V1 = 'visit-1';
const V2 = 'visit-2';
const P1 = 'patient-1';

const record = (id: string, collection: string, fields: Record<string, unknown>) => ({
  id,
  collection,
  fields,
  deleted: false,
});

function cache() {
  const client = new QueryClient();
  client.setQueryData(queryKeys.charting.visitRecord(V1), record(V1, 'visit', { patientId: P1 }));
  client.setQueryData(queryKeys.charting.visitPart(V1, 'fusion'), [
    record('fusion-1', 'fusion', { visitId: V1, patientId: P1 }),
  ]);
  client.setQueryData(queryKeys.charting.visitPart(V2, 'fusion'), [
    record('fusion-2', 'fusion', { visitId: V2, patientId: P1 }),
  ]);
  client.setQueryData(queryKeys.charting.visitPart(V1, 'coverTest'), []);
  client.setQueryData(queryKeys.charting.patient(P1), record(P1, 'patient', {}));
  client.setQueryData(queryKeys.charting.patientSections(P1, ['fusion', 'coverTest']), new Map());
  client.setQueryData(queryKeys.records.detail('fusion', 'fusion-9'), null);
  client.setQueryData(queryKeys.outbox.counts(), { waiting: 0 });
  return client;
}

function stale(change: DataChange): string[] {
  const client = cache();
  return staleQueries(change, client.getQueryCache().getAll())
    .map((query) => JSON.stringify(query.queryKey))
    .sort();
}

const key = (k: readonly unknown[]) => JSON.stringify(k);

describe('which queries a write makes stale', () => {
  it('an edit of a Section held on screen: that Section’s query and the patient’s trends only', () => {
    expect(stale({ collections: ['fusion'], recordIds: ['fusion-1'], outbox: false })).toEqual(
      [
        key(queryKeys.charting.patientSections(P1, ['fusion', 'coverTest'])),
        key(queryKeys.charting.visitPart(V1, 'fusion')),
      ].sort(),
    );
  });

  it('a record the tablet shows nowhere yet: every list of its collection, no other detail', () => {
    expect(stale({ collections: ['fusion'], recordIds: ['fusion-new'], outbox: false })).toEqual(
      [
        key(queryKeys.charting.patientSections(P1, ['fusion', 'coverTest'])),
        key(queryKeys.charting.visitPart(V1, 'fusion')),
        key(queryKeys.charting.visitPart(V2, 'fusion')),
      ].sort(),
    );
  });

  it('a change that does not list its records (a sync page): every query of its collection', () => {
    expect(stale({ collections: ['fusion'], outbox: false })).toEqual(
      [
        key(queryKeys.charting.patientSections(P1, ['fusion', 'coverTest'])),
        key(queryKeys.charting.visitPart(V1, 'fusion')),
        key(queryKeys.charting.visitPart(V2, 'fusion')),
        key(queryKeys.records.detail('fusion', 'fusion-9')),
      ].sort(),
    );
  });

  it('the visit record itself: its own query, not its Sections', () => {
    expect(stale({ collections: ['visit'], recordIds: [V1], outbox: false })).toEqual([
      key(queryKeys.charting.visitRecord(V1)),
    ]);
  });

  it('the Outbox: the Outbox queries', () => {
    expect(stale({ collections: [], outbox: true })).toEqual([key(queryKeys.outbox.counts())]);
  });
});
