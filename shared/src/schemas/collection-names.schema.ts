// The names of the synced collections (their labels are in clinical/section-labels.ts). Kept apart
// from the registry so that a record schema can refer to another collection (an Addendum names
// the collection it amends) without an import cycle; the registry re-exports all of it.
// New collections go at the end: the list is part of the wire contract.

export const SECTION_COLLECTIONS = [
  'amblyoscopeSetup',
  'simultaneousPerception',
  'amblyoscopeAngles',
  'suppressionScotoma',
  'fusion',
  'fusionalRanges',
  'grossStereopsis',
  'visualAcuity',
  'coverTest',
  'prismCoverTest',
  'nearPointConvergence',
  'accommodation',
  'stereoacuity',
  'motility',
  'plan',
] as const;
export type SectionCollectionName = (typeof SECTION_COLLECTIONS)[number];

export const COLLECTIONS = [
  'patient',
  'visit',
  ...SECTION_COLLECTIONS,
  'attachment',
  'letter',
  'addendum',
] as const;
export type CollectionName = (typeof COLLECTIONS)[number];
