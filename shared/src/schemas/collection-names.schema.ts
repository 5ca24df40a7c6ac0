// The names of the synced collections and the words screens use for each. Kept apart from the
// registry so that a record schema can refer to another collection (an Addendum names the
// collection it amends) without an import cycle; the registry re-exports all of it.
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

/** What a person calls a record of each collection (the trade's words and Fuselight's). */
export const collectionWords = {
  patient: 'Patient',
  visit: 'Visit',
  amblyoscopeSetup: 'Amblyoscope setup',
  simultaneousPerception: 'Simultaneous perception',
  amblyoscopeAngles: 'Amblyoscope angles',
  suppressionScotoma: 'Suppression and scotoma',
  fusion: 'Fusion',
  fusionalRanges: 'Fusional ranges',
  grossStereopsis: 'Gross stereopsis',
  visualAcuity: 'Visual acuity',
  coverTest: 'Cover test',
  prismCoverTest: 'Prism cover test',
  nearPointConvergence: 'Near point of convergence',
  accommodation: 'Accommodation',
  stereoacuity: 'Stereoacuity',
  motility: 'Ocular motility',
  plan: 'Plan',
  attachment: 'Attachment',
  letter: 'Letter',
  addendum: 'Addendum',
} as const satisfies Record<CollectionName, string>;
