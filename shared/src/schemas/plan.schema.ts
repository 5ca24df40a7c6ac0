// The plan: impression in words, management choices, exercises and when to see the patient again.
import { z } from 'zod';
import { compositeField, measurement, text } from './field-types.schema';
import { sectionShape } from './section.schema';

export const MANAGEMENT_CHOICES = [
  'exercises',
  'glasses',
  'occlusion',
  'prisms',
  'referral',
  'review',
  'discharge',
] as const;
export const managementWords = {
  exercises: 'Exercises',
  glasses: 'Glasses',
  occlusion: 'Occlusion',
  prisms: 'Prisms',
  referral: 'Referral',
  review: 'Review',
  discharge: 'Discharge',
} as const;
export type ManagementChoice = (typeof MANAGEMENT_CHOICES)[number];

export const planSchema = z.object({
  ...sectionShape,
  impression: text('Impression', { max: 4000 }).nullish(),
  management: compositeField(
    z
      .array(
        z.enum(MANAGEMENT_CHOICES, {
          error: `Management must be chosen from: ${Object.values(managementWords).join(', ')}`,
        }),
        { error: 'Management must be a list of choices' },
      )
      .max(MANAGEMENT_CHOICES.length)
      .refine((items) => new Set(items).size === items.length, {
        error: 'Management lists each choice once',
      }),
    {
      label: 'Management',
      kind: 'choices',
      options: MANAGEMENT_CHOICES.map((value) => ({ value, label: managementWords[value] })),
    },
  ).nullish(),
  exercisesPrescribed: compositeField(
    z
      .array(text('Exercise', { max: 200, min: 1 }), { error: 'Exercises must be a list' })
      .max(30, { error: 'Exercises prescribed must be at most 30' }),
    { label: 'Exercises prescribed', kind: 'list' },
  ).nullish(),
  followUpWeeks: measurement({
    label: 'Follow-up interval',
    unit: 'weeks',
    min: 0,
    max: 104,
    integer: true,
  }).nullish(),
});
