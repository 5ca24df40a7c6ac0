// Near point of convergence judged against cited cut-offs (docs/clinical-reference.md):
// adults — break beyond 5 cm or recovery beyond 7 cm is abnormal (Scheiman et al., Optom Vis Sci
// 2003;80(3)); children — break 3.3 ± 2.6 cm in kindergarten to 4.3 ± 3.4 cm in grade 6 (Optom
// Vis Sci 1998, elementary schoolchildren norms). The child source gives mean ± SD, not a
// cut-off, so the limit there is mean + k·SD with k a clinic setting (Fuselight default 1, not
// from a publication).
import { ClinicalInputError } from './clinical-input.error';
import { CLINICAL_CAUTION } from './caution';
import { oneDecimal, requireNonNegative, requireRange } from './validate';

export const NPC_ADULT_NORM = {
  breakLimitCm: 5,
  recoveryLimitCm: 7,
  citation: 'Scheiman et al., Optom Vis Sci 2003;80(3)',
} as const;

export const NPC_CHILD_NORMS = [
  {
    group: 'kindergarten',
    approxAgeYears: [5, 6],
    breakMeanCm: 3.3,
    breakSdCm: 2.6,
    citation: 'Optom Vis Sci 1998, NPC norms in elementary schoolchildren',
  },
  {
    group: 'grade 6',
    approxAgeYears: [11, 12],
    breakMeanCm: 4.3,
    breakSdCm: 3.4,
    citation: 'Optom Vis Sci 1998, NPC norms in elementary schoolchildren',
  },
] as const;

export interface NpcSettings {
  /** Age from which the adult cut-offs apply; clinic setting, default 18. */
  adultFromAgeYears?: number;
  /** Child limit = mean + k·SD; clinic setting, Fuselight default 1. */
  childSdMultiple?: number;
}

export interface NpcInput {
  breakCm: number;
  recoveryCm?: number;
  ageYears: number;
}

export interface NpcJudgement {
  verdict: 'within norm' | 'receded' | 'no cited norm for this age';
  reasons: string[];
  normUsed: string;
  citation?: string;
  caution: string;
}

export function judgeNearPointOfConvergence(
  { breakCm, recoveryCm, ageYears }: NpcInput,
  { adultFromAgeYears = 18, childSdMultiple = 1 }: NpcSettings = {},
): NpcJudgement {
  requireNonNegative('breakCm', breakCm);
  requireRange('ageYears', ageYears, 0, 130);
  requireNonNegative('childSdMultiple', childSdMultiple);
  requireRange('adultFromAgeYears', adultFromAgeYears, 0, 130);
  if (recoveryCm !== undefined) {
    requireNonNegative('recoveryCm', recoveryCm);
    // Convergence is regained only once the target moves back out past where it broke.
    if (recoveryCm < breakCm) {
      throw new ClinicalInputError(
        'recoveryCm',
        `must not be nearer than the break (${recoveryCm} cm < ${breakCm} cm)`,
      );
    }
  }

  if (ageYears >= adultFromAgeYears) {
    const reasons: string[] = [];
    if (breakCm > NPC_ADULT_NORM.breakLimitCm) {
      reasons.push(`break ${oneDecimal(breakCm)} cm is beyond ${NPC_ADULT_NORM.breakLimitCm} cm`);
    }
    if (recoveryCm !== undefined && recoveryCm > NPC_ADULT_NORM.recoveryLimitCm) {
      reasons.push(
        `recovery ${oneDecimal(recoveryCm)} cm is beyond ${NPC_ADULT_NORM.recoveryLimitCm} cm`,
      );
    }
    return {
      verdict: reasons.length > 0 ? 'receded' : 'within norm',
      reasons,
      normUsed: `adult: break ≤ ${NPC_ADULT_NORM.breakLimitCm} cm, recovery ≤ ${NPC_ADULT_NORM.recoveryLimitCm} cm`,
      citation: NPC_ADULT_NORM.citation,
      caution: CLINICAL_CAUTION,
    };
  }

  // Only the two ends of the school years are cited; use the nearer one rather than inventing
  // values for the grades between.
  if (ageYears >= 5 && ageYears < 13) {
    const norm = ageYears < 8.5 ? NPC_CHILD_NORMS[0] : NPC_CHILD_NORMS[1];
    const limit = norm.breakMeanCm + childSdMultiple * norm.breakSdCm;
    const reasons =
      breakCm > limit
        ? [
            `break ${oneDecimal(breakCm)} cm is beyond ${oneDecimal(limit)} cm (${norm.group} mean ${norm.breakMeanCm} + ${childSdMultiple} × SD ${norm.breakSdCm})`,
          ]
        : [];
    return {
      verdict: reasons.length > 0 ? 'receded' : 'within norm',
      reasons,
      normUsed: `child (${norm.group}): break ${norm.breakMeanCm} ± ${norm.breakSdCm} cm; limit mean + ${childSdMultiple} SD; recovery not judged (no cited norm)`,
      citation: norm.citation,
      caution: CLINICAL_CAUTION,
    };
  }

  return {
    verdict: 'no cited norm for this age',
    reasons: [],
    normUsed: `none: cited norms cover school years (about 5–12) and adults from ${adultFromAgeYears}`,
    caution: CLINICAL_CAUTION,
  };
}
