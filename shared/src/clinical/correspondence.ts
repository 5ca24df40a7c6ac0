// Retinal correspondence from the objective and subjective angles on the amblyoscope.
// Angle of anomaly = objective − subjective (Millodot, "angle of anomaly"); NRC, harmonious and
// unharmonious ARC as defined in Stedman's (see docs/clinical-reference.md). A result that fits no
// class is flagged for re-measurement instead of being forced into one.
import { CLINICAL_CAUTION } from './caution';
import { oneDecimal, requireAngleDeg, requireNonNegative } from './validate';

/** Clinic setting; "a difference over 5° suggests ARC" (common practice, [memory]; docs/clinical-reference.md). */
export const DEFAULT_CORRESPONDENCE_TOLERANCE_DEG = 5;

export type CorrespondenceResult = 'NRC' | 'harmonious ARC' | 'unharmonious ARC' | 'inconsistent';

export interface CorrespondenceInput {
  objectiveDeg: number;
  subjectiveDeg: number;
  toleranceDeg?: number;
}

export interface CorrespondenceClassification {
  result: CorrespondenceResult;
  angleOfAnomalyDeg: number;
  toleranceDeg: number;
  needsRemeasurement: boolean;
  message: string;
  caution: string;
}

export function classifyCorrespondence({
  objectiveDeg,
  subjectiveDeg,
  toleranceDeg = DEFAULT_CORRESPONDENCE_TOLERANCE_DEG,
}: CorrespondenceInput): CorrespondenceClassification {
  requireAngleDeg('objectiveDeg', objectiveDeg);
  requireAngleDeg('subjectiveDeg', subjectiveDeg);
  requireNonNegative('toleranceDeg', toleranceDeg);

  const angleOfAnomalyDeg = objectiveDeg - subjectiveDeg;
  const anomaly = oneDecimal(angleOfAnomalyDeg);
  const tol = oneDecimal(toleranceDeg);
  const make = (result: CorrespondenceResult, message: string): CorrespondenceClassification => ({
    result,
    angleOfAnomalyDeg,
    toleranceDeg,
    needsRemeasurement: result === 'inconsistent',
    message,
    caution: CLINICAL_CAUTION,
  });

  if (Math.abs(angleOfAnomalyDeg) <= toleranceDeg) {
    return make(
      'NRC',
      `Subjective and objective angles agree within ${tol}° (angle of anomaly ${anomaly}°): consistent with normal retinal correspondence.`,
    );
  }

  const objectiveIsDeviated = Math.abs(objectiveDeg) > toleranceDeg;
  const subjectiveNearZero = Math.abs(subjectiveDeg) <= toleranceDeg;
  if (objectiveIsDeviated && subjectiveNearZero) {
    return make(
      'harmonious ARC',
      `Subjective angle is about zero while the objective angle is ${oneDecimal(objectiveDeg)}°, so the angle of anomaly (${anomaly}°) about equals the objective angle: consistent with harmonious abnormal retinal correspondence.`,
    );
  }

  const sameSide = Math.sign(subjectiveDeg) === Math.sign(objectiveDeg);
  if (objectiveIsDeviated && sameSide && Math.abs(subjectiveDeg) < Math.abs(objectiveDeg)) {
    return make(
      'unharmonious ARC',
      `Subjective angle (${oneDecimal(subjectiveDeg)}°) lies between zero and the objective angle (${oneDecimal(objectiveDeg)}°); angle of anomaly ${anomaly}°: consistent with unharmonious abnormal retinal correspondence.`,
    );
  }

  const why = !sameSide
    ? 'the subjective angle is on the opposite side of zero from the objective angle'
    : 'the subjective angle lies beyond the objective angle';
  return make(
    'inconsistent',
    `These angles fit no correspondence class (${why}; objective ${oneDecimal(objectiveDeg)}°, subjective ${oneDecimal(subjectiveDeg)}°). Re-measure both angles before interpreting.`,
  );
}
