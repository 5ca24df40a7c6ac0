// Binocular single vision is a hierarchy: simultaneous perception, then fusion, then stereopsis.
// A grade cannot be present while one below it is absent (docs/clinical-reference.md, "The
// assessment"); the chart must say so at the point of entry.
import { ClinicalInputError } from './clinical-input.error';

export type BsvGradeStatus = 'present' | 'absent' | 'not tested';
export type SuppressingEye = 'right' | 'left' | 'alternating';
export type BsvGradeName = 'simultaneousPerception' | 'fusion' | 'stereopsis';

export type BsvGradeEntry =
  | BsvGradeStatus
  | { status: 'present' | 'not tested' }
  | { status: 'absent'; suppressingEye?: SuppressingEye };

export interface BsvGrades {
  simultaneousPerception: BsvGradeEntry;
  fusion: BsvGradeEntry;
  stereopsis: BsvGradeEntry;
}

export interface BsvInconsistency {
  lowerGrade: BsvGradeName;
  higherGrade: BsvGradeName;
  message: string;
}

const ORDER: readonly BsvGradeName[] = ['simultaneousPerception', 'fusion', 'stereopsis'];

const WORDS: Record<BsvGradeName, string> = {
  simultaneousPerception: 'simultaneous perception',
  fusion: 'fusion',
  stereopsis: 'stereopsis',
};

const STATUSES: readonly string[] = ['present', 'absent', 'not tested'];

function statusOf(field: BsvGradeName, entry: BsvGradeEntry): BsvGradeStatus {
  const status = typeof entry === 'string' ? entry : entry.status;
  if (!STATUSES.includes(status)) {
    throw new ClinicalInputError(
      field,
      `must be 'present', 'absent' or 'not tested' (got ${String(status)})`,
    );
  }
  if (typeof entry !== 'string' && 'suppressingEye' in entry && status !== 'absent') {
    throw new ClinicalInputError(field, 'a suppressing eye can only be recorded with absent');
  }
  return status;
}

/** Every pair (lower absent, higher present); an empty list means the grades are consistent. */
export function checkBsvGrades(grades: BsvGrades): BsvInconsistency[] {
  const statuses = ORDER.map((name) => ({ name, status: statusOf(name, grades[name]) }));
  const inconsistencies: BsvInconsistency[] = [];
  statuses.forEach((lower, i) => {
    if (lower.status !== 'absent') return;
    for (const higher of statuses.slice(i + 1)) {
      if (higher.status !== 'present') continue;
      inconsistencies.push({
        lowerGrade: lower.name,
        higherGrade: higher.name,
        message: `${capitalise(WORDS[higher.name])} is recorded as present while ${WORDS[lower.name]} is absent; a grade cannot be present without the one below it. Check both entries.`,
      });
    }
  });
  return inconsistencies;
}

function capitalise(text: string): string {
  return text.charAt(0).toUpperCase() + text.slice(1);
}
