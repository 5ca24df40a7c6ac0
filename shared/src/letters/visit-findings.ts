// The findings of one visit in the trade's words, both units wherever an angle is given, for a
// letter's findings table. Each finding has a stable key so this visit's row can sit beside the
// previous visit's; only findings that were recorded become rows.
import { describeDeviation } from '../clinical/deviation';
import { interpretVisit, type Interpretation } from '../clinical/interpretation';
import { degreesToPrismDioptres, prismDioptresToDegrees } from '../clinical/prism-dioptre';
import type { PatientFields } from '../schemas/patient.schema';
import type { RecordFields } from '../schemas/registry';
import { ageInYears } from './dates';

export type LetterSectionName =
  | 'visualAcuity'
  | 'coverTest'
  | 'prismCoverTest'
  | 'simultaneousPerception'
  | 'amblyoscopeAngles'
  | 'fusion'
  | 'fusionalRanges'
  | 'nearPointConvergence'
  | 'stereoacuity'
  | 'plan';

type Section<C extends LetterSectionName> = Partial<RecordFields<C>> | null | undefined;

/** One visit with the sections a letter reads; absent sections were not charted. */
export interface VisitFindings {
  visit: { id: string; date: string; reason?: string | null };
  visualAcuity?: Section<'visualAcuity'>;
  coverTest?: Section<'coverTest'>;
  prismCoverTest?: Section<'prismCoverTest'>;
  simultaneousPerception?: Section<'simultaneousPerception'>;
  amblyoscopeAngles?: Section<'amblyoscopeAngles'>;
  fusion?: Section<'fusion'>;
  fusionalRanges?: Section<'fusionalRanges'>;
  nearPointConvergence?: Section<'nearPointConvergence'>;
  stereoacuity?: Section<'stereoacuity'>;
  plan?: Section<'plan'>;
}

export interface FindingLine {
  key: string;
  label: string;
  text: string;
}

const num = (value: number | null | undefined): value is number =>
  typeof value === 'number' && Number.isFinite(value);

function one(value: number): string {
  return (Math.round(value * 10) / 10).toFixed(1);
}

/** "+12.0° → eso 12.0° (21.3Δ)" through the clinical module, so words and units match screens. */
function angleWords(
  horizontalDeg: number | null | undefined,
  verticalPd: number | null | undefined,
  torsionDeg: number | null | undefined,
): string | null {
  if (!num(horizontalDeg) && !num(verticalPd) && !num(torsionDeg)) return null;
  return describeDeviation({
    ...(num(horizontalDeg) ? { horizontalDeg } : {}),
    ...(num(verticalPd) ? { verticalPd } : {}),
    ...(num(torsionDeg) ? { torsionDeg } : {}),
  }).summary;
}

function degreesBothUnits(deg: number): string {
  return `${one(deg)}° (${one(degreesToPrismDioptres(deg))}Δ)`;
}

function prismBothUnits(pd: number): string {
  return `${one(pd)}Δ (${one(prismDioptresToDegrees(pd))}°)`;
}

const EYE: Record<string, string> = {
  right: 'right eye',
  left: 'left eye',
  alternating: 'alternating',
};

function coverWords(
  finding: string | null | undefined,
  horizontal: string | null | undefined,
  vertical: string | null | undefined,
  eye: string | null | undefined,
  control: string | null | undefined,
): string | null {
  if (!finding) return null;
  if (finding === 'orthophoria') return 'orthophoria';
  const kind = finding === 'tropia' ? 'tropia' : 'phoria';
  const names: string[] = [];
  if (horizontal) names.push(`${horizontal}${kind}`);
  if (vertical) names.push(`${vertical}${kind}`);
  if (names.length === 0) names.push(kind);
  const extras = [eye ? EYE[eye] : null, control ? `${control} control` : null].filter(Boolean);
  return [names.join(' with '), ...extras].join(', ');
}

function prismWords(
  horizontalPd: number | null | undefined,
  horizontalBase: string | null | undefined,
  verticalPd: number | null | undefined,
  verticalBase: string | null | undefined,
  verticalEye: string | null | undefined,
): string | null {
  const parts: string[] = [];
  if (num(horizontalPd)) {
    // Base out neutralises an eso deviation, base in an exo one.
    const term = horizontalBase === 'out' ? 'eso ' : horizontalBase === 'in' ? 'exo ' : '';
    const base = horizontalBase ? `, base ${horizontalBase}` : '';
    parts.push(`${term}${prismBothUnits(horizontalPd)}${base}`);
  }
  if (num(verticalPd)) {
    const base = verticalBase ? `, base ${verticalBase}` : '';
    const eye = verticalEye ? ` before the ${EYE[verticalEye]}` : '';
    parts.push(`vertical ${prismBothUnits(verticalPd)}${base}${eye}`);
  }
  return parts.length > 0 ? parts.join('; ') : null;
}

function acuityEye(
  notation: string | null | undefined,
  logMar: number | null | undefined,
): string | null {
  if (!notation && !num(logMar)) return null;
  if (notation && num(logMar)) return `${notation} (${logMar.toFixed(2)} logMAR)`;
  return notation ?? `${(logMar as number).toFixed(2)} logMAR`;
}

const BSV: Record<string, string> = {
  present: 'present',
  absent: 'absent',
  notTested: 'not tested',
};

function rangeWords(
  breakValue: number | null | undefined,
  recovery: number | null | undefined,
  both: (v: number) => string,
): string | null {
  if (!num(breakValue) && !num(recovery)) return null;
  const parts: string[] = [];
  if (num(breakValue)) parts.push(`break ${both(Math.abs(breakValue))}`);
  if (num(recovery)) parts.push(`recovery ${both(Math.abs(recovery))}`);
  return parts.join(', ');
}

/** The recorded findings of one visit, in letter order. */
export function findingLines(findings: VisitFindings): FindingLine[] {
  const lines: FindingLine[] = [];
  const push = (key: string, label: string, text: string | null) => {
    if (text) lines.push({ key, label, text });
  };

  const va = findings.visualAcuity;
  if (va) {
    const right =
      acuityEye(va.rightDistanceCorrectedNotation, va.rightDistanceCorrectedLogMar) ??
      acuityEye(va.rightDistanceUncorrectedNotation, va.rightDistanceUncorrectedLogMar);
    const left =
      acuityEye(va.leftDistanceCorrectedNotation, va.leftDistanceCorrectedLogMar) ??
      acuityEye(va.leftDistanceUncorrectedNotation, va.leftDistanceUncorrectedLogMar);
    const text = [right ? `right ${right}` : null, left ? `left ${left}` : null]
      .filter(Boolean)
      .join('; ');
    push('acuity.distance', 'Distance visual acuity', text || null);
  }

  const ct = findings.coverTest;
  if (ct) {
    push(
      'cover.near',
      'Cover test, near',
      coverWords(
        ct.nearFinding,
        ct.nearHorizontalDirection,
        ct.nearVerticalDirection,
        ct.nearEye,
        ct.nearControl,
      ),
    );
    push(
      'cover.distance',
      'Cover test, distance',
      coverWords(
        ct.distanceFinding,
        ct.distanceHorizontalDirection,
        ct.distanceVerticalDirection,
        ct.distanceEye,
        ct.distanceControl,
      ),
    );
  }

  const pct = findings.prismCoverTest;
  if (pct) {
    push(
      'prism.near',
      'Prism cover test, near',
      prismWords(
        pct.nearHorizontalPd,
        pct.nearHorizontalBase,
        pct.nearVerticalPd,
        pct.nearVerticalBase,
        pct.nearVerticalEye,
      ),
    );
    push(
      'prism.distance',
      'Prism cover test, distance',
      prismWords(
        pct.distanceHorizontalPd,
        pct.distanceHorizontalBase,
        pct.distanceVerticalPd,
        pct.distanceVerticalBase,
        pct.distanceVerticalEye,
      ),
    );
  }

  const sp = findings.simultaneousPerception;
  if (sp?.result) push('bsv.sp', 'Simultaneous perception', BSV[sp.result] ?? null);

  const angles = findings.amblyoscopeAngles;
  if (angles) {
    push(
      'angle.objective',
      'Objective angle (amblyoscope)',
      angleWords(
        angles.objectiveHorizontalDeg,
        angles.objectiveVerticalPd,
        angles.objectiveTorsionDeg,
      ),
    );
    push(
      'angle.subjective',
      'Subjective angle (amblyoscope)',
      angleWords(
        angles.subjectiveHorizontalDeg,
        angles.subjectiveVerticalPd,
        angles.subjectiveTorsionDeg,
      ),
    );
  }

  const fusion = findings.fusion;
  if (fusion?.result) push('bsv.fusion', 'Fusion', BSV[fusion.result] ?? null);

  const fr = findings.fusionalRanges;
  if (fr) {
    push(
      'range.convergence',
      'Fusional convergence',
      rangeWords(fr.convergenceBreakDeg, fr.convergenceRecoveryDeg, degreesBothUnits),
    );
    push(
      'range.divergence',
      'Fusional divergence',
      rangeWords(fr.divergenceBreakDeg, fr.divergenceRecoveryDeg, degreesBothUnits),
    );
    push(
      'range.rightUp',
      'Vertical range, right up',
      rangeWords(fr.rightUpBreakPd, fr.rightUpRecoveryPd, prismBothUnits),
    );
    push(
      'range.leftUp',
      'Vertical range, left up',
      rangeWords(fr.leftUpBreakPd, fr.leftUpRecoveryPd, prismBothUnits),
    );
  }

  const npc = findings.nearPointConvergence;
  if (npc && (num(npc.breakCm) || num(npc.recoveryCm))) {
    const parts: string[] = [];
    if (num(npc.breakCm)) parts.push(`break ${npc.breakCm} cm`);
    if (num(npc.recoveryCm)) parts.push(`recovery ${npc.recoveryCm} cm`);
    push('npc', 'Near point of convergence', parts.join(', '));
  }

  const stereo = findings.stereoacuity;
  if (stereo) {
    const test = stereo.testUsed
      ? ` (${stereo.testUsed}${num(stereo.testDistanceCm) ? ` at ${stereo.testDistanceCm} cm` : ''})`
      : '';
    if (stereo.noneDetected) push('stereo', 'Stereoacuity', `none detected${test}`);
    else if (num(stereo.valueArcsec))
      push('stereo', 'Stereoacuity', `${stereo.valueArcsec}″ of arc${test}`);
  }
  return lines;
}

/** The interpretations a letter to a referrer carries (the others stay on the Visit screen). */
const LETTER_INTERPRETATIONS: readonly Interpretation['key'][] = ['correspondence', 'npc'];

/**
 * Computed interpretations of one visit for a letter, from the same interpretation module as the
 * Visit and the Bench: only those that could be made, each in one sentence. Each is support for
 * judgement, never a verdict; the letter prints them under INTERPRETATION_LABEL.
 */
export function letterInterpretations(
  findings: VisitFindings,
  patient: Pick<PatientFields, 'dateOfBirth'>,
): string[] {
  const { items } = interpretVisit(findings, {
    ageYears: ageInYears(patient.dateOfBirth, findings.visit.date),
  });
  return items
    .filter((item) => LETTER_INTERPRETATIONS.includes(item.key) && item.summary !== null)
    .map((item) => `${item.title}: ${item.summary}`);
}
