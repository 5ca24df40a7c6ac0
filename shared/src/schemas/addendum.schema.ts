// An Addendum: what was added to or corrected on a visit after it was Signed. The signed records
// are never edited; an Addendum is its own record beside them, written on a tablet (free text) or
// by the server when a supervisor resolves a dispute on a Signed or Countersigned visit (then it
// also names the field it amends, the value before and after, and the dispute).
import { z } from 'zod';
import { COLLECTION_LABELS } from '../clinical/section-labels';
import { COLLECTIONS } from './collection-names.schema';
import { choice, id, instant, jsonValue, text, withMeta } from './field-types.schema';

export const addendumSchema = z.object({
  siteId: id('Site'),
  visitId: id('Visit'),
  patientId: id('Patient'),
  authorId: id('Author'),
  writtenAt: instant('Written at'),
  text: text('Addendum text', { max: 4000, min: 1 }),
  amendedCollection: choice('Amended section', COLLECTION_LABELS, COLLECTIONS).nullish(),
  amendedRecordId: id('Amended record').nullish(),
  amendedField: withMeta(
    z.string({ error: 'Amended field must be text' }).regex(/^[a-z][A-Za-z0-9]{0,99}$/, {
      error: 'Amended field must be a field name like objectiveHorizontalDeg',
    }),
    { label: 'Amended field', unit: null, kind: 'text' },
  ).nullish(),
  previousValue: jsonValue('Value before').nullish(),
  newValue: jsonValue('Value after').nullish(),
  conflictId: id('Dispute').nullish(),
});
export type AddendumFields = z.infer<typeof addendumSchema>;
