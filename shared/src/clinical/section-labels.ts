// What a person calls a record of each synced collection: the one label source for Section names
// on the Visit, the Bench, the Review desk, the Outbox, Addenda and letters (the trade's words and
// Fuselight's). A screen that needs a shorter heading inside a panel of its own says so there.
import type { CollectionName } from '../schemas/collection-names.schema';

export const COLLECTION_LABELS = {
  patient: 'Patient details',
  visit: 'Visit',
  amblyoscopeSetup: 'Amblyoscope setup',
  simultaneousPerception: 'Simultaneous perception',
  amblyoscopeAngles: 'Amblyoscope angles',
  suppressionScotoma: 'Suppression scotoma',
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

/** "Amblyoscope angles", "Patient details"; an unknown collection keeps its own name. */
export function collectionLabel(collection: string): string {
  return Object.hasOwn(COLLECTION_LABELS, collection)
    ? COLLECTION_LABELS[collection as CollectionName]
    : collection;
}
