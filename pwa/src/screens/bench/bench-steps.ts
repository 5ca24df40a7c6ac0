// The Bench's steps in the order the trade measures them at the amblyoscope. Two steps share
// the angles Section (subjective first, then objective), so each step names its fields too.
import { collectionLabel } from '@fuselight/shared';
import type { BenchCollection } from '../../data/bench';

export type BenchStepId =
  | 'setup'
  | 'simultaneous-perception'
  | 'subjective-angle'
  | 'objective-angle'
  | 'suppression-scotoma'
  | 'fusion'
  | 'fusional-ranges'
  | 'gross-stereopsis'
  | 'summary';

export interface BenchStep {
  id: BenchStepId;
  title: string;
  collection: BenchCollection | null;
  /** The Section fields this step records (all of the Section's when omitted). */
  fields?: readonly string[];
}

export const BENCH_STEPS: readonly BenchStep[] = [
  { id: 'setup', title: 'Setup', collection: 'amblyoscopeSetup' },
  {
    id: 'simultaneous-perception',
    title: collectionLabel('simultaneousPerception'),
    collection: 'simultaneousPerception',
  },
  {
    id: 'subjective-angle',
    title: 'Subjective angle',
    collection: 'amblyoscopeAngles',
    fields: ['subjectiveHorizontalDeg', 'subjectiveVerticalPd', 'subjectiveTorsionDeg'],
  },
  {
    id: 'objective-angle',
    title: 'Objective angle',
    collection: 'amblyoscopeAngles',
    fields: ['objectiveHorizontalDeg', 'objectiveVerticalPd', 'objectiveTorsionDeg'],
  },
  {
    id: 'suppression-scotoma',
    title: collectionLabel('suppressionScotoma'),
    collection: 'suppressionScotoma',
  },
  { id: 'fusion', title: collectionLabel('fusion'), collection: 'fusion' },
  {
    id: 'fusional-ranges',
    title: collectionLabel('fusionalRanges'),
    collection: 'fusionalRanges',
  },
  {
    id: 'gross-stereopsis',
    title: collectionLabel('grossStereopsis'),
    collection: 'grossStereopsis',
  },
  { id: 'summary', title: 'Summary', collection: null },
];

export function stepById(id: string | null): BenchStep {
  return BENCH_STEPS.find((step) => step.id === id) ?? BENCH_STEPS[0]!;
}
