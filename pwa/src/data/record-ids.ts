// Ids that every tablet derives alike: a visit has one record per Section collection, its id
// derived from the visit (UUID version 5), so two tablets that start the same Section offline
// write one record. The derivation is shared with the server (shared/src/schemas/section-records.ts).
export { sectionRecordId } from '@fuselight/shared';
