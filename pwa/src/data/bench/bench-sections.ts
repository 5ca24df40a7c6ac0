// The Bench's view of a visit: the seven amblyoscope Sections in the order they are measured,
// and whether each has findings, was skipped with a reason, or is still empty.
import { type RecordFields, sectionDefaults } from '@fuselight/shared';
import type { VisitBundle } from '../charting';

export const BENCH_COLLECTIONS = [
  'amblyoscopeSetup',
  'simultaneousPerception',
  'amblyoscopeAngles',
  'suppressionScotoma',
  'fusion',
  'fusionalRanges',
  'grossStereopsis',
] as const;
export type BenchCollection = (typeof BENCH_COLLECTIONS)[number];

/** A Section's fields as the Bench edits them: placement keys are set by the repository. */
export type BenchFields<C extends BenchCollection> = Omit<
  RecordFields<C>,
  'siteId' | 'visitId' | 'patientId'
>;

const PLACEMENT = new Set(['siteId', 'visitId', 'patientId', 'skippedReason']);

/** The fields of a visit's Section, with "not recorded" (null) for anything never entered. */
export function benchFields<C extends BenchCollection>(
  bundle: VisitBundle | null | undefined,
  collection: C,
): BenchFields<C> {
  const record = bundle?.sections[collection];
  return {
    ...(sectionDefaults[collection] as object),
    ...(record?.fields ?? {}),
  } as BenchFields<C>;
}

export type SectionProgress = 'empty' | 'recorded' | 'skipped';

/** Skipped wins (the reason is what the chart says); otherwise any finding counts as recorded. */
export function sectionProgress(
  bundle: VisitBundle | null | undefined,
  collection: BenchCollection,
  fieldNames?: readonly string[],
): SectionProgress {
  const fields = bundle?.sections[collection]?.fields as Record<string, unknown> | undefined;
  if (!fields) return 'empty';
  if (typeof fields.skippedReason === 'string' && fields.skippedReason.length > 0) return 'skipped';
  const recorded = Object.entries(fields).some(
    ([name, value]) =>
      !PLACEMENT.has(name) &&
      (fieldNames === undefined || fieldNames.includes(name)) &&
      value !== null &&
      value !== undefined &&
      !(Array.isArray(value) && value.length === 0),
  );
  return recorded ? 'recorded' : 'empty';
}
