import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { formatStamp } from './hlc';
import {
  jsonEqual,
  mergeChange,
  mergeField,
  type FieldWriteStamp,
  type IncomingChange,
  type IncomingFieldEdit,
  type JsonValue,
  type ServerFieldState,
  type ServerRecordState,
} from './merge';

const T0 = Date.UTC(2026, 11, 1, 9, 0, 0);
const stamp = (offsetMs: number, device: string, counter = 0): string =>
  formatStamp({ wallMs: T0 + offsetMs, counter, deviceId: device });

function server(
  value: JsonValue,
  version: number,
  device: string,
  offsetMs: number,
  conflictOpen = false,
): ServerFieldState {
  return {
    value,
    stamp: { hlc: stamp(offsetMs, device), version, by: `user-${device}`, device },
    conflictOpen,
  };
}

function edit(
  value: JsonValue,
  baseVersion: number,
  device: string,
  offsetMs: number,
): IncomingFieldEdit {
  return { value, baseVersion, device, by: `user-${device}`, hlc: stamp(offsetMs, device) };
}

describe('mergeField: the three cases of the field-level merge rule', () => {
  it.each([
    // case, server field, incoming edit, kind, reason, provisional value
    [
      '1: field unknown on the server',
      undefined,
      edit('A', 0, 'tab-b', 10),
      'apply',
      'new-field',
      'A',
    ],
    [
      '1: last set at the base version',
      server('old', 5, 'tab-a', 0),
      edit('new', 5, 'tab-b', 10),
      'apply',
      'seen-by-device',
      'new',
    ],
    [
      '1: last set before the base version',
      server('old', 3, 'tab-a', 0),
      edit('new', 5, 'tab-b', -10),
      'apply',
      'seen-by-device',
      'new',
    ],
    [
      '1: last set by the same device with an earlier stamp',
      server('old', 9, 'tab-b', 0),
      edit('new', 5, 'tab-b', 10),
      'apply',
      'own-earlier-write',
      'new',
    ],
    [
      '2: a concurrent edit to an equal value',
      server('same', 9, 'tab-a', 0),
      edit('same', 5, 'tab-b', 10),
      'equal',
      undefined,
      'same',
    ],
    [
      '2: equal objects with keys in another order',
      server({ a: 1, b: [1, 2] }, 9, 'tab-a', 0),
      edit({ b: [1, 2], a: 1 }, 5, 'tab-b', 10),
      'equal',
      undefined,
      { a: 1, b: [1, 2] },
    ],
    [
      '3: a concurrent edit with the greater stamp wins provisionally',
      server('A', 9, 'tab-a', 0),
      edit('B', 5, 'tab-b', 10),
      'conflict',
      undefined,
      'B',
    ],
    [
      '3: a concurrent edit with the smaller stamp loses provisionally',
      server('A', 9, 'tab-a', 10),
      edit('B', 5, 'tab-b', 0),
      'conflict',
      undefined,
      'A',
    ],
    [
      '3: the same device with a later server stamp is still concurrent',
      server('A', 9, 'tab-b', 10),
      edit('B', 5, 'tab-b', 0),
      'conflict',
      undefined,
      'A',
    ],
    [
      '3: arrays differing in order are different values',
      server([1, 2], 9, 'tab-a', 0),
      edit([2, 1], 5, 'tab-b', 10),
      'conflict',
      undefined,
      [2, 1],
    ],
  ] as const)('case %s', (_name, before, incoming, kind, reason, provisional) => {
    const decision = mergeField(before, incoming);
    expect(decision.kind).toBe(kind);
    if (decision.kind === 'apply') expect(decision.reason).toBe(reason);
    expect(decision.provisional.value).toEqual(provisional);
    expect(decision.conflict).toBe(kind === 'conflict' ? 'opens' : 'none');
  });

  it('breaks a tie of equal HLC stamps by the greater device id', () => {
    const shared = stamp(0, 'clock');
    const before: ServerFieldState = {
      value: 'A',
      stamp: { hlc: shared, version: 9, by: 'u1', device: 'tab-a' },
    };
    const incoming: IncomingFieldEdit = {
      value: 'B',
      baseVersion: 5,
      hlc: shared,
      by: 'u2',
      device: 'tab-z',
    };
    expect(mergeField(before, incoming).provisional).toMatchObject({
      source: 'incoming',
      value: 'B',
    });
    const reversed: ServerFieldState = {
      value: 'B',
      stamp: { hlc: shared, version: 9, by: 'u2', device: 'tab-z' },
    };
    expect(
      mergeField(reversed, { ...incoming, value: 'A', device: 'tab-a' }).provisional,
    ).toMatchObject({ source: 'server', value: 'B' });
  });

  it.each([
    [
      'a non-concurrent edit is applied and joins the open conflict',
      server('A', 9, 'tab-a', 0, true),
      edit('C', 9, 'tab-c', 20),
      'apply',
      'C',
    ],
    [
      'a concurrent edit to another value joins it with the greater stamp provisional',
      server('A', 9, 'tab-a', 0, true),
      edit('C', 5, 'tab-c', 20),
      'conflict',
      'C',
    ],
    [
      'a concurrent edit with a smaller stamp joins it and leaves the value',
      server('A', 9, 'tab-a', 30, true),
      edit('C', 5, 'tab-c', 20),
      'conflict',
      'A',
    ],
    [
      'a concurrent edit to the same value joins it as a candidate',
      server('A', 9, 'tab-a', 0, true),
      edit('A', 5, 'tab-c', 20),
      'equal',
      'A',
    ],
  ] as const)('while a conflict is open, %s', (_name, before, incoming, kind, provisional) => {
    const decision = mergeField(before, incoming);
    expect(decision.kind).toBe(kind);
    expect(decision.conflict).toBe('joins');
    expect(decision.provisional.value).toBe(provisional);
  });
});

describe('jsonEqual', () => {
  it.each([
    [null, null, true],
    [0, -0, true],
    ['1', 1, false],
    [null, {}, false],
    [[], {}, false],
    [{ a: { b: [1, { c: null }] } }, { a: { b: [1, { c: null }] } }, true],
    [{ a: 1 }, { a: 1, b: 2 }, false],
    [{ a: 1, b: undefined }, { a: 1 }, true],
  ])('compares %j and %j as %s', (a, b, equal) => {
    expect(jsonEqual(a, b)).toBe(equal);
    expect(jsonEqual(b, a)).toBe(equal);
  });
});

const st = (offsetMs: number, version: number, device: string): FieldWriteStamp => ({
  hlc: stamp(offsetMs, device),
  version,
  by: `user-${device}`,
  device,
});

function record(partial: Partial<ServerRecordState>): ServerRecordState {
  return { version: 0, deleted: false, fields: {}, stamps: {}, openConflicts: [], ...partial };
}

function change(
  partial: Partial<IncomingChange> & { device: string; offsetMs?: number },
): IncomingChange {
  const { offsetMs = 100, ...rest } = partial;
  return {
    baseVersion: 0,
    by: `user-${partial.device}`,
    hlc: stamp(offsetMs, partial.device),
    fields: {},
    ...rest,
  };
}

// A patient created by tab-a at version 1, its date of birth corrected by tab-a at version 2.
const patient = record({
  version: 2,
  fields: { familyName: 'Okafor', dateOfBirth: '2016-04-09' },
  stamps: { familyName: st(0, 1, 'tab-a'), dateOfBirth: st(10, 2, 'tab-a') },
});

describe('mergeChange: whole changes', () => {
  it.each([
    [
      'a new record is applied',
      null,
      change({ device: 'tab-a', fields: { familyName: 'Okafor' } }),
      'applied',
      [],
      { familyName: 'Okafor' },
    ],
    [
      'an edit on the current version is applied',
      patient,
      change({ device: 'tab-b', baseVersion: 2, fields: { familyName: 'Oka' } }),
      'applied',
      [],
      { familyName: 'Oka' },
    ],
    [
      'an edit of another field than a concurrent one is merged',
      patient,
      change({ device: 'tab-b', baseVersion: 1, fields: { familyName: 'Oka' } }),
      'merged',
      [],
      { familyName: 'Oka' },
    ],
    [
      'a concurrent edit to the same value is merged with nothing written',
      patient,
      change({ device: 'tab-b', baseVersion: 1, fields: { dateOfBirth: '2016-04-09' } }),
      'merged',
      [],
      {},
    ],
    [
      'a concurrent edit to another value is a conflict on that field only',
      patient,
      change({
        device: 'tab-b',
        baseVersion: 1,
        fields: { dateOfBirth: '2016-04-19', familyName: 'Oka' },
      }),
      'conflict',
      ['dateOfBirth'],
      { dateOfBirth: '2016-04-19', familyName: 'Oka' },
    ],
    [
      'a device editing on top of its own unseen writes is applied',
      patient,
      change({ device: 'tab-a', baseVersion: 1, fields: { dateOfBirth: '2016-05-01' } }),
      'applied',
      [],
      { dateOfBirth: '2016-05-01' },
    ],
  ] as const)('%s', (_name, before, incoming, status, conflicts, writes) => {
    const result = mergeChange(before, incoming);
    expect(result.status).toBe(status);
    expect(result.conflicts).toEqual(conflicts);
    expect(result.writes).toEqual(writes);
  });

  it('keeps the server value of a conflict when the server stamp is greater', () => {
    const result = mergeChange(
      patient,
      change({
        device: 'tab-b',
        baseVersion: 1,
        offsetMs: 5,
        fields: { dateOfBirth: '2016-04-19' },
      }),
    );
    expect(result.status).toBe('conflict');
    expect(result.writes).toEqual({});
    const outcome = result.outcomes.find((o) => o.field === 'dateOfBirth');
    expect(outcome?.against?.value).toBe('2016-04-09');
    expect(outcome?.decision.provisional.source).toBe('server');
  });

  it('reports a conflict when an edit joins an open conflict without being concurrent', () => {
    const open = { ...patient, openConflicts: ['dateOfBirth'] };
    const result = mergeChange(
      open,
      change({ device: 'tab-c', baseVersion: 2, fields: { dateOfBirth: '2016-04-10' } }),
    );
    expect(result.status).toBe('conflict');
    expect(result.conflicts).toEqual(['dateOfBirth']);
    expect(result.writes).toEqual({ dateOfBirth: '2016-04-10' });
  });
});

describe('mergeChange: tombstones', () => {
  const deletedByA = record({
    version: 3,
    deleted: true,
    fields: patient.fields,
    stamps: { ...patient.stamps, deleted: st(20, 3, 'tab-a') },
  });

  it('applies a delete made on the current version', () => {
    const result = mergeChange(patient, change({ device: 'tab-b', baseVersion: 2, deleted: true }));
    expect(result).toMatchObject({
      status: 'applied',
      deleted: true,
      writes: { deleted: true },
      conflicts: [],
    });
  });

  it('makes a delete racing another device’s edit a conflict on the tombstone', () => {
    const result = mergeChange(patient, change({ device: 'tab-b', baseVersion: 1, deleted: true }));
    expect(result.status).toBe('conflict');
    expect(result.conflicts).toEqual(['deleted']);
    const outcome = result.outcomes.find((o) => o.field === 'deleted');
    expect(outcome?.against).toMatchObject({
      value: false,
      stamp: { version: 2, device: 'tab-a' },
    });
    expect(result.deleted).toBe(true);
  });

  it('keeps the record alive when the racing edit has the greater stamp', () => {
    const result = mergeChange(
      patient,
      change({ device: 'tab-b', baseVersion: 1, offsetMs: 1, deleted: true }),
    );
    expect(result.status).toBe('conflict');
    expect(result.deleted).toBe(false);
    expect(result.writes).toEqual({});
  });

  it('makes an edit racing another device’s delete a conflict on the tombstone', () => {
    const result = mergeChange(
      deletedByA,
      change({ device: 'tab-b', baseVersion: 2, fields: { familyName: 'Oka' } }),
    );
    expect(result.status).toBe('conflict');
    expect(result.conflicts).toEqual(['deleted']);
    expect(result.writes).toEqual({ familyName: 'Oka', deleted: false });
    expect(result.deleted).toBe(false);
  });

  it('leaves a record deleted when the edit had seen the delete', () => {
    const result = mergeChange(
      deletedByA,
      change({ device: 'tab-b', baseVersion: 3, fields: { familyName: 'Oka' } }),
    );
    expect(result).toMatchObject({
      status: 'applied',
      deleted: true,
      writes: { familyName: 'Oka' },
    });
  });

  it('merges two deletes of the same record without a conflict', () => {
    const result = mergeChange(
      deletedByA,
      change({ device: 'tab-b', baseVersion: 2, deleted: true }),
    );
    expect(result).toMatchObject({ status: 'merged', deleted: true, conflicts: [], writes: {} });
  });

  it('restores a deleted record on an explicit deleted: false that had seen the delete', () => {
    const result = mergeChange(
      deletedByA,
      change({ device: 'tab-b', baseVersion: 3, deleted: false }),
    );
    expect(result).toMatchObject({ status: 'applied', deleted: false, writes: { deleted: false } });
  });

  it('ignores deleted: false on a live record', () => {
    const result = mergeChange(
      patient,
      change({ device: 'tab-b', baseVersion: 2, deleted: false, fields: { familyName: 'O' } }),
    );
    expect(result.writes).toEqual({ familyName: 'O' });
    expect(result.outcomes.map((o) => o.field)).toEqual(['familyName']);
  });
});

describe('merge properties', () => {
  const valueArb: fc.Arbitrary<JsonValue> = fc.oneof(
    fc.constantFrom<JsonValue>('A', 'B', 'C', null, 1, 2, true),
    fc.array(fc.integer({ min: 0, max: 3 }), { maxLength: 3 }),
    fc.record({ x: fc.integer({ min: 0, max: 2 }) }),
  );
  const writeArb = fc.record({
    value: valueArb,
    offsetMs: fc.integer({ min: 0, max: 20 }),
    counter: fc.integer({ min: 0, max: 3 }),
    device: fc.constantFrom('tab-a', 'tab-b', 'tab-c'),
  });
  type Write = { value: JsonValue; offsetMs: number; counter: number; device: string };
  const hlcOf = (w: Write) => stamp(w.offsetMs, w.device, w.counter);

  it('is deterministic: the same inputs give the same decision', () => {
    fc.assert(
      fc.property(writeArb, writeArb, fc.integer({ min: 0, max: 10 }), (a, b, base) => {
        const before: ServerFieldState = {
          value: a.value,
          stamp: { hlc: hlcOf(a), version: 5, by: 'u', device: a.device },
        };
        const incoming: IncomingFieldEdit = {
          value: b.value,
          hlc: hlcOf(b),
          by: 'v',
          device: b.device,
          baseVersion: base,
        };
        expect(mergeField(before, incoming)).toEqual(
          mergeField(
            JSON.parse(JSON.stringify(before)) as ServerFieldState,
            JSON.parse(JSON.stringify(incoming)) as IncomingFieldEdit,
          ),
        );
      }),
    );
  });

  it('picks the same provisional value whichever of two concurrent writes arrives first', () => {
    fc.assert(
      fc.property(writeArb, writeArb, (a, b) => {
        fc.pre(a.device !== b.device);
        // Each write is concurrent with the other: the second to arrive had base version 0.
        const first = (w: Write): ServerFieldState => ({
          value: w.value,
          stamp: { hlc: hlcOf(w), version: 1, by: 'u', device: w.device },
        });
        const second = (w: Write): IncomingFieldEdit => ({
          value: w.value,
          hlc: hlcOf(w),
          by: 'u',
          device: w.device,
          baseVersion: 0,
        });
        const ab = mergeField(first(a), second(b));
        const ba = mergeField(first(b), second(a));
        expect(ab.kind).toBe(ba.kind);
        expect(jsonEqual(ab.provisional.value, ba.provisional.value)).toBe(true);
        // Equal values need no winner; a conflict's provisional write is the same one either way.
        if (ab.kind === 'conflict') expect(ab.provisional.hlc).toBe(ba.provisional.hlc);
      }),
    );
  });

  it('converges on the value with the greatest stamp for any arrival order of concurrent writes', () => {
    fc.assert(
      fc.property(
        fc.uniqueArray(writeArb, { minLength: 2, maxLength: 5, selector: (w) => hlcOf(w) }),
        (writes) => {
          const orders = [writes, [...writes].reverse()];
          const finals = orders.map((order) => {
            let field: ServerFieldState | undefined;
            order.forEach((w, index) => {
              const decision = mergeField(field, {
                value: w.value,
                hlc: hlcOf(w),
                by: 'u',
                device: w.device,
                baseVersion: 0,
              });
              if (decision.kind === 'equal' || decision.provisional.source === 'server') {
                if (field)
                  field = {
                    ...field,
                    conflictOpen: field.conflictOpen || decision.conflict !== 'none',
                  };
                return;
              }
              field = {
                value: decision.provisional.value,
                stamp: {
                  hlc: decision.provisional.hlc,
                  version: index + 1,
                  by: 'u',
                  device: w.device,
                },
                conflictOpen: (field?.conflictOpen ?? false) || decision.conflict !== 'none',
              };
            });
            return field?.value;
          });
          // Same-device writes can be case 1 (own earlier write), so only all-distinct devices
          // converge on the max. Equal values are case 2 ("nothing to resolve"): a write equal to
          // the current value leaves its stamp out of the race, so with repeated values the
          // provisional value may depend on arrival order (the next test shows it); the spec
          // promises the greatest stamp only among differing values, and a supervisor settles it.
          fc.pre(new Set(writes.map((w) => w.device)).size === writes.length);
          fc.pre(new Set(writes.map((w) => JSON.stringify(w.value))).size === writes.length);
          expect(jsonEqual(finals[0], finals[1])).toBe(true);
        },
      ),
    );
  });
  it('leaves an equal write out of the race (case 2), so repeated values can order the provisional value', () => {
    // tab-b and tab-c both write x:2, tab-a writes x:0; tab-b's and tab-a's stamps tie on time.
    const stamp = (ms: number, device: string) =>
      formatStamp({ wallMs: ms, counter: 0, deviceId: device });
    const apply = (order: { value: JsonValue; hlc: string; device: string }[]) => {
      let field: ServerFieldState | undefined;
      order.forEach((w, index) => {
        const decision = mergeField(field, { ...w, by: 'u', baseVersion: 0 });
        if (decision.kind === 'equal' || decision.provisional.source === 'server') return;
        field = {
          value: decision.provisional.value,
          stamp: { hlc: decision.provisional.hlc, version: index + 1, by: 'u', device: w.device },
          conflictOpen: true,
        };
      });
      return field?.value;
    };
    const a = { value: { x: 0 }, hlc: stamp(1_000_001, 'tab-a'), device: 'tab-a' };
    const b = { value: { x: 2 }, hlc: stamp(1_000_001, 'tab-b'), device: 'tab-b' };
    const c = { value: { x: 2 }, hlc: stamp(1_000_000, 'tab-c'), device: 'tab-c' };
    expect(apply([a, b, c])).toEqual({ x: 2 });
    expect(apply([c, b, a])).toEqual({ x: 0 });
  });
});
