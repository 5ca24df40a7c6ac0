// Shown beside every computed interpretation on screens and in letters (docs/conventions.md,
// "Words and originality"): the computation supports the clinician and defers to them.
export const CLINICAL_CAUTION =
  'Fuselight supports and does not replace clinical judgement; follow local protocols and licensed practice.';
