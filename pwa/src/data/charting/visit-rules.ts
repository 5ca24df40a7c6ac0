// Who may do what to a visit, and how an Addendum is read. An Addendum is an `addendum` record
// beside the signed content (shared/src/schemas/addendum.schema.ts), written on a tablet or by
// the server when a supervisor resolves a dispute on a Signed visit; the signed Sections are never
// edited. Earlier app versions kept an Addendum as a second `plan` record whose impression starts
// with a marker line; such records are still read as Addenda, so none drops out of sight, but
// nothing writes them any more.
import {
  fieldMeta,
  isCollectionName,
  isLegacyAddendumPlan,
  type CollectionName,
  type FieldMeta,
  type JsonValue,
  type SessionUser,
} from '@fuselight/shared';
import type { LocalRecord } from '../records-repository';

/** The field an Addendum amends (set when a resolved dispute wrote it), with the values. */
export interface AddendumAmendment {
  collection: CollectionName;
  recordId: string | null;
  field: string;
  /** The field's label in words ("Objective horizontal angle"). */
  fieldLabel: string;
  previousValue: JsonValue | null;
  newValue: JsonValue | null;
  conflictId: string | null;
}

export interface Addendum {
  id: string;
  authorId: string;
  /** Only the earlier plan-record form carried a name; otherwise null. */
  authorName: string | null;
  writtenAt: string;
  text: string;
  amendment: AddendumAmendment | null;
  /** Field names disputed between devices. */
  conflicts: string[];
  /** Where it is stored: its own record, or an earlier app's `plan` record. */
  storedAs: 'addendum' | 'plan';
}

type Visit = LocalRecord<'visit'>;

/** true when allowed, otherwise the reason in words. */
export type RuleAnswer = true | string;

export function canEditSections(visit: Visit): boolean {
  return visit.fields.status === 'draft';
}

export function canSign(visit: Visit, user: SessionUser | null): RuleAnswer {
  if (!user) return 'Sign in to sign this visit.';
  if (visit.fields.status !== 'draft') return 'This visit is already signed.';
  if (user.role === 'admin') return 'An admin account cannot sign clinical visits.';
  return true;
}

export function canCountersign(visit: Visit, user: SessionUser | null): RuleAnswer {
  if (!user) return 'Sign in to countersign.';
  if (visit.fields.status === 'draft')
    return 'The visit must be signed before it is countersigned.';
  if (visit.fields.status === 'countersigned') return 'This visit is already countersigned.';
  if (visit.fields.needsCountersign !== true) return 'This visit does not need countersigning.';
  if (user.role !== 'supervisor') return 'Only a supervisor can countersign.';
  if (visit.fields.signedBy === user.id) return 'A supervisor cannot countersign their own visit.';
  return true;
}

export function canAddAddendum(visit: Visit, user: SessionUser | null = null): RuleAnswer {
  if (visit.fields.status === 'draft') {
    return 'This visit is not signed yet: change its Sections directly.';
  }
  if (user?.role === 'admin') return 'An admin account cannot add to clinical visits.';
  return true;
}

function labelOf(collection: CollectionName, field: string): string {
  if (field === 'deleted') return 'Deleted';
  return (fieldMeta[collection] as Record<string, FieldMeta>)[field]?.label ?? field;
}

/** An `addendum` record as the screens show it. */
export function addendumFromRecord(record: LocalRecord<'addendum'>): Addendum {
  const f = record.fields;
  const collection = f.amendedCollection;
  const amendment: AddendumAmendment | null =
    collection && isCollectionName(collection) && f.amendedField
      ? {
          collection,
          recordId: f.amendedRecordId ?? null,
          field: f.amendedField,
          fieldLabel: labelOf(collection, f.amendedField),
          previousValue: (f.previousValue ?? null) as JsonValue | null,
          newValue: (f.newValue ?? null) as JsonValue | null,
          conflictId: f.conflictId ?? null,
        }
      : null;
  return {
    id: record.id,
    authorId: f.authorId,
    authorName: null,
    writtenAt: f.writtenAt,
    text: f.text,
    amendment,
    conflicts: record.conflicts,
    storedAs: 'addendum',
  };
}

/** The Addendum an earlier app version kept in a plan record, or null for the visit's own plan. */
export function parseLegacyAddendum(record: LocalRecord<'plan'>): Addendum | null {
  const impression = record.fields.impression;
  if (!isLegacyAddendumPlan(record.fields) || typeof impression !== 'string') return null;
  const newline = impression.indexOf('\n');
  const header = newline === -1 ? impression : impression.slice(0, newline);
  const [, writtenAt = '', authorId = '', authorName = ''] = header.split('\t');
  return {
    id: record.id,
    authorId,
    authorName: authorName || null,
    writtenAt,
    text: newline === -1 ? '' : impression.slice(newline + 1),
    amendment: null,
    conflicts: record.conflicts,
    storedAs: 'plan',
  };
}

/** Oldest first; same time: by id, so every tablet lists them in one order. */
export function byWrittenAt(a: Addendum, b: Addendum): number {
  return a.writtenAt.localeCompare(b.writtenAt) || (a.id < b.id ? -1 : a.id > b.id ? 1 : 0);
}
