// Ids that every tablet derives alike. A visit has one record per Section collection; if two
// tablets start the same Section offline, both must write the same record so the server merges
// their fields instead of keeping two rival Sections. UUID version 5 (name-based, RFC 9562).
import { v5 as uuidv5 } from 'uuid';
import type { CollectionName } from '@fuselight/shared';

/** Fuselight's own namespace for name-based ids (a fixed random UUID). */
const FUSELIGHT_SECTION_NAMESPACE = '6f1e4a52-93c4-4d0b-9a67-2f8b1c5d7e31';

export function sectionRecordId(visitId: string, collection: CollectionName): string {
  return uuidv5(`${visitId}/${collection}`, FUSELIGHT_SECTION_NAMESPACE);
}
