// One Section record per visit and collection. A Section's id is derived from its visit (UUID
// version 5, name-based, RFC 9562), so two tablets that start the same Section offline write one
// record and the server merges their fields. Records made before ids were derived, or a rival
// made elsewhere, may still sit beside it: the derived one is the visit's Section, and without it
// the lowest id is, so every screen, letter and end picks the same record. Earlier app versions
// kept an Addendum as a second `plan` record whose impression starts with a marker line; such a
// record is an Addendum, never the visit's plan.
import { v5 as uuidv5 } from 'uuid';
import type { CollectionName } from './collection-names.schema';

/** Fuselight's own namespace for name-based ids (a fixed random UUID). */
const FUSELIGHT_SECTION_NAMESPACE = '6f1e4a52-93c4-4d0b-9a67-2f8b1c5d7e31';

/** The id every tablet derives alike for a visit's record of a Section collection. */
export function sectionRecordId(visitId: string, collection: CollectionName): string {
  return uuidv5(`${visitId}/${collection}`, FUSELIGHT_SECTION_NAMESPACE);
}

/** The marker line of an Addendum kept as a `plan` record by earlier app versions. */
export const LEGACY_ADDENDUM_PREFIX = 'Addendum ·';

/** true when a `plan` record's fields are an Addendum an earlier app version kept there. */
export function isLegacyAddendumPlan(fields: { impression?: unknown } | null | undefined): boolean {
  const impression = fields?.impression;
  return typeof impression === 'string' && impression.startsWith(`${LEGACY_ADDENDUM_PREFIX}\t`);
}

/** What the rule reads of a record: its id, whether it is deleted, and its fields. */
export interface SectionCandidate {
  id: string;
  deleted?: boolean;
  fields: unknown;
}

/** Records that can be the visit's Section: live, and for `plan` not an earlier app's Addendum. */
export function sectionCandidates<R extends SectionCandidate>(
  collection: CollectionName,
  records: readonly R[],
): R[] {
  return records.filter(
    (record) =>
      record.deleted !== true &&
      (collection !== 'plan' || !isLegacyAddendumPlan(record.fields as { impression?: unknown })),
  );
}

/**
 * The visit's Section among records of one collection placed on that visit: the record with the
 * derived id, otherwise the lowest id (deleted records and earlier apps' plan Addenda never count).
 * Null when there is none.
 */
export function pickSectionRecord<R extends SectionCandidate>(
  visitId: string,
  collection: CollectionName,
  records: readonly R[],
): R | null {
  const candidates = sectionCandidates(collection, records);
  const derived = sectionRecordId(visitId, collection);
  const own = candidates.find((record) => record.id === derived);
  if (own) return own;
  let lowest: R | null = null;
  for (const record of candidates) if (lowest === null || record.id < lowest.id) lowest = record;
  return lowest;
}
