// The field-level merge rule both ends share (docs/sync-protocol.md, "Field-level merge"). The
// server calls it inside the transaction that holds the record; the conflict tests call it as the
// oracle. Pure: no I/O, no clock; versions and stamps come in as arguments.
import { compareStamps } from './hlc';

export type JsonValue =
  string | number | boolean | null | JsonValue[] | { [key: string]: JsonValue };

/** Name of the tombstone field: a delete is an edit of `deleted` and can conflict like one. */
export const TOMBSTONE_FIELD = 'deleted';

/** Who set a field's current value, and when (the server keeps one per field). */
export interface FieldWriteStamp {
  hlc: string;
  /** Server version at which the value was set. */
  version: number;
  /** User id. */
  by: string;
  /** Device id, or `server` for a resolution made at a desk. */
  device: string;
}

/** A field as the server holds it. */
export interface ServerFieldState {
  value: JsonValue;
  stamp: FieldWriteStamp;
  /** True while the field has an open conflict. */
  conflictOpen?: boolean;
}

/** One field of an incoming change. */
export interface IncomingFieldEdit {
  value: JsonValue;
  hlc: string;
  by: string;
  device: string;
  /** The record version the edit was made on. */
  baseVersion: number;
}

/** The value the field holds after the decision (until a supervisor resolves any conflict). */
export interface ProvisionalValue {
  source: 'incoming' | 'server';
  value: JsonValue;
  hlc: string;
  by: string;
  device: string;
}

export type ApplyReason = 'new-field' | 'seen-by-device' | 'own-earlier-write';

/**
 * - `apply`: case 1, the incoming value wins and gets a new version.
 * - `equal`: case 2, a concurrent edit to the same value; nothing to write.
 * - `conflict`: case 3, a concurrent edit to a different value; `provisional` is the greater stamp.
 * `conflict` says whether this edit opens a conflict, joins an open one as another candidate
 * (an edit of a field whose conflict is open, by any rule), or neither.
 */
export type FieldMergeDecision =
  | {
      kind: 'apply';
      reason: ApplyReason;
      provisional: ProvisionalValue;
      conflict: 'none' | 'joins';
    }
  | { kind: 'equal'; provisional: ProvisionalValue; conflict: 'none' | 'joins' }
  | { kind: 'conflict'; provisional: ProvisionalValue; conflict: 'opens' | 'joins' };

function isPlainObject(value: unknown): value is Record<string, unknown> {
  return typeof value === 'object' && value !== null && !Array.isArray(value);
}

/** Deep equality of JSON values: object key order does not matter, array order does. */
export function jsonEqual(a: unknown, b: unknown): boolean {
  if (a === b) return true;
  if (typeof a === 'number' && typeof b === 'number') return Number.isNaN(a) && Number.isNaN(b);
  if (Array.isArray(a)) {
    if (!Array.isArray(b) || a.length !== b.length) return false;
    return a.every((item, index) => jsonEqual(item, b[index]));
  }
  if (isPlainObject(a)) {
    if (!isPlainObject(b)) return false;
    // An undefined property is absent in JSON.
    const keysA = Object.keys(a).filter((key) => a[key] !== undefined);
    const keysB = Object.keys(b).filter((key) => b[key] !== undefined);
    if (keysA.length !== keysB.length) return false;
    return keysA.every((key) => Object.hasOwn(b, key) && jsonEqual(a[key], b[key]));
  }
  return false;
}

/** Deterministic order of two writes: greater HLC stamp, then greater device id. */
export function compareWrites(
  a: { hlc: string; device: string },
  b: { hlc: string; device: string },
): number {
  const byStamp = compareStamps(a.hlc, b.hlc);
  if (byStamp !== 0) return byStamp;
  return a.device < b.device ? -1 : a.device > b.device ? 1 : 0;
}

function fromIncoming(edit: IncomingFieldEdit): ProvisionalValue {
  return { source: 'incoming', value: edit.value, hlc: edit.hlc, by: edit.by, device: edit.device };
}

function fromServer(field: ServerFieldState): ProvisionalValue {
  const { hlc, by, device } = field.stamp;
  return { source: 'server', value: field.value, hlc, by, device };
}

/** Why case 1 holds (the device saw the current value when it edited), or null when it does not. */
export function seenByDevice(
  stamp: FieldWriteStamp | undefined,
  edit: { hlc: string; device: string; baseVersion: number },
): ApplyReason | null {
  if (stamp === undefined) return 'new-field';
  if (stamp.version <= edit.baseVersion) return 'seen-by-device';
  if (stamp.device === edit.device && compareStamps(stamp.hlc, edit.hlc) < 0)
    return 'own-earlier-write';
  return null;
}

/** The field-level merge rule for one field (`serverField` undefined: unknown on the server). */
export function mergeField(
  serverField: ServerFieldState | undefined,
  incoming: IncomingFieldEdit,
): FieldMergeDecision {
  const joins = serverField?.conflictOpen === true ? 'joins' : 'none';
  const reason = seenByDevice(serverField?.stamp, incoming);
  if (reason !== null || serverField === undefined) {
    return {
      kind: 'apply',
      reason: reason ?? 'new-field',
      provisional: fromIncoming(incoming),
      conflict: joins,
    };
  }
  if (jsonEqual(serverField.value, incoming.value)) {
    return { kind: 'equal', provisional: fromServer(serverField), conflict: joins };
  }
  const incomingWins = compareWrites(incoming, serverField.stamp) > 0;
  return {
    kind: 'conflict',
    provisional: incomingWins ? fromIncoming(incoming) : fromServer(serverField),
    conflict: joins === 'joins' ? 'joins' : 'opens',
  };
}

/** A record as the server holds it, with the field names that have an open conflict. */
export interface ServerRecordState {
  version: number;
  deleted: boolean;
  fields: Readonly<Record<string, JsonValue>>;
  /** One stamp per field, and for `deleted` once the record has been deleted or restored. */
  stamps: Readonly<Record<string, FieldWriteStamp>>;
  openConflicts: readonly string[];
}

/** A pushed change, already validated, with who made it. */
export interface IncomingChange {
  baseVersion: number;
  hlc: string;
  by: string;
  device: string;
  fields: Readonly<Record<string, JsonValue>>;
  /** True to delete, false to restore, absent to leave the tombstone alone. */
  deleted?: boolean;
}

export interface FieldMergeOutcome {
  field: string;
  /** The value the edit carried for this field (for `deleted`, the implied tombstone value). */
  incomingValue: JsonValue;
  /**
   * What the decision compared against: the field as the server held it (undefined when unknown),
   * or for a delete racing an edit, the tombstone value `false` stamped by that edit. A conflict
   * that opens has this and the incoming edit as its first two candidates.
   */
  against: ServerFieldState | undefined;
  decision: FieldMergeDecision;
}

export type MergeStatus = 'applied' | 'merged' | 'conflict';

export interface ChangeMergeResult {
  status: MergeStatus;
  /** Every field the change carried, plus `deleted` when the tombstone is involved. */
  outcomes: FieldMergeOutcome[];
  /** Fields (and possibly `deleted`) to write with the change's stamp and the new version. */
  writes: Record<string, JsonValue>;
  /** The record's tombstone after the change. */
  deleted: boolean;
  /** Fields that opened or joined a conflict, in change order. */
  conflicts: string[];
}

/**
 * A field changed since `baseVersion` by another writer the device had not seen: the stamp of the
 * latest such write, or undefined. This is what a delete races against.
 */
function latestUnseenWrite(
  record: ServerRecordState,
  change: IncomingChange,
  except: string,
): FieldWriteStamp | undefined {
  let latest: FieldWriteStamp | undefined;
  for (const [field, stamp] of Object.entries(record.stamps)) {
    if (field === except) continue;
    if (seenByDevice(stamp, change) !== null) continue;
    if (latest === undefined || compareWrites(stamp, latest) > 0) latest = stamp;
  }
  return latest;
}

function tombstoneState(record: ServerRecordState): ServerFieldState | undefined {
  const stamp = record.stamps[TOMBSTONE_FIELD];
  if (stamp === undefined) return undefined;
  return {
    value: record.deleted,
    stamp,
    conflictOpen: record.openConflicts.includes(TOMBSTONE_FIELD),
  };
}

/**
 * The tombstone decision. A delete racing an edit is a conflict on `deleted`: a delete that had
 * not seen another device's later edit, or an edit that had not seen another device's delete,
 * conflicts with it; the candidates are the tombstone values (true: deleted, false: kept).
 * Null when the change leaves the tombstone alone.
 */
function mergeTombstone(
  record: ServerRecordState,
  change: IncomingChange,
): FieldMergeOutcome | null {
  const before = tombstoneState(record);
  const edit = {
    hlc: change.hlc,
    by: change.by,
    device: change.device,
    baseVersion: change.baseVersion,
  };
  const outcome = (base: ServerFieldState | undefined, value: boolean): FieldMergeOutcome => ({
    field: TOMBSTONE_FIELD,
    incomingValue: value,
    against: base,
    decision: mergeField(base, { ...edit, value }),
  });
  const tombstoneUnseen = before !== undefined && seenByDevice(before.stamp, change) === null;

  if (change.deleted === true) {
    if (record.deleted || tombstoneUnseen) return outcome(before, true);
    const racedEdit = latestUnseenWrite(record, change, TOMBSTONE_FIELD);
    if (racedEdit === undefined) return outcome(before, true);
    // The record was kept alive by that edit: the delete conflicts with it.
    return outcome({ value: false, stamp: racedEdit, conflictOpen: before?.conflictOpen }, true);
  }
  if (change.deleted === false) {
    // Restoring a deleted record follows the plain rule; `deleted: false` on a live record
    // changes nothing unless the tombstone has an open conflict (then it joins it).
    if (record.deleted || before?.conflictOpen === true) return outcome(before, false);
    return null;
  }
  if (record.deleted && tombstoneUnseen && Object.keys(change.fields).length > 0) {
    // An edit made on a live record that another device deleted meanwhile implies "keep".
    return outcome(before, false);
  }
  return null;
}

/**
 * The field-level merge rule for a whole change on a record (`record` null: unknown on the server).
 * Status: `conflict` when any field opened or joined a conflict; else `merged` when another device
 * changed the record since `baseVersion`; else `applied`.
 */
export function mergeChange(
  record: ServerRecordState | null,
  change: IncomingChange,
): ChangeMergeResult {
  const state: ServerRecordState = record ?? {
    version: 0,
    deleted: false,
    fields: {},
    stamps: {},
    openConflicts: [],
  };
  const open = new Set(state.openConflicts);
  const outcomes: FieldMergeOutcome[] = [];
  for (const [field, value] of Object.entries(change.fields)) {
    const stamp = state.stamps[field];
    // A field with no stamp is unknown on the server, whatever value a caller put in `fields`.
    const before: ServerFieldState | undefined =
      stamp === undefined
        ? undefined
        : { value: state.fields[field] ?? null, stamp, conflictOpen: open.has(field) };
    const edit: IncomingFieldEdit = {
      value,
      hlc: change.hlc,
      by: change.by,
      device: change.device,
      baseVersion: change.baseVersion,
    };
    outcomes.push({
      field,
      incomingValue: value,
      against: before,
      decision: mergeField(before, edit),
    });
  }
  const tombstone = record === null ? null : mergeTombstone(state, change);
  if (tombstone) outcomes.push(tombstone);
  if (record === null && change.deleted === true) {
    // A record created already deleted carries its tombstone stamp.
    const edit = {
      value: true,
      hlc: change.hlc,
      by: change.by,
      device: change.device,
      baseVersion: change.baseVersion,
    };
    outcomes.push({
      field: TOMBSTONE_FIELD,
      incomingValue: true,
      against: undefined,
      decision: mergeField(undefined, edit),
    });
  }

  const writes: Record<string, JsonValue> = {};
  const conflicts: string[] = [];
  let deleted = state.deleted;
  for (const { field, decision } of outcomes) {
    if (decision.conflict !== 'none') conflicts.push(field);
    if (decision.kind === 'equal' || decision.provisional.source === 'server') continue;
    if (field === TOMBSTONE_FIELD) deleted = decision.provisional.value === true;
    writes[field] = decision.provisional.value;
  }

  const otherDeviceChanged = Object.values(state.stamps).some(
    (stamp) => stamp.version > change.baseVersion && stamp.device !== change.device,
  );
  const status: MergeStatus =
    conflicts.length > 0 ? 'conflict' : otherDeviceChanged ? 'merged' : 'applied';
  return { status, outcomes, writes, deleted, conflicts };
}
