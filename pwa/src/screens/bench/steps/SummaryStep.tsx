// The Bench's summary: every Section in words, the interpretations with the clinical caution,
// the BSV grade check, and what was skipped and why.
import {
  bsvGradesOf,
  CLINICAL_CAUTION,
  correspondenceOf,
  describeDeviation,
  fusionalRangesOf,
  normsTableName,
  stereoOf,
} from '@fuselight/shared';
import { useVisitBundle } from '../../../data/charting';
import { type BenchCollection, benchFields } from '../../../data/bench';
import { BENCH_STEPS } from '../bench-steps';
import { Caution } from '../StepFrame';
import { missingMarkMessage } from './FusionStep';
import { scotomaRegionOf } from './ScotomaStep';
import { describeRegion } from './ScotomaMap';

const RESULT_WORDS = { present: 'present', absent: 'absent', notTested: 'not tested' } as const;
const yesNo = (v: boolean | null | undefined) => (v == null ? 'not recorded' : v ? 'yes' : 'no');

export function SummaryStep({ visitId }: { visitId: string }) {
  const bundle = useVisitBundle(visitId).data;
  const f = <C extends BenchCollection>(c: C) => benchFields(bundle, c);
  const setup = f('amblyoscopeSetup');
  const sp = f('simultaneousPerception');
  const angles = f('amblyoscopeAngles');
  const scotoma = f('suppressionScotoma');
  const fusion = f('fusion');
  const ranges = f('fusionalRanges');
  const stereo = f('grossStereopsis');
  const correspondence = correspondenceOf(angles);
  const rangeResult = fusionalRangesOf(angles, ranges);
  const verdict = stereoOf(stereo.trials);
  const bsv = bsvGradesOf({ simultaneousPerception: sp, fusion, grossStereopsis: stereo }).problems;
  const region = scotomaRegionOf(scotoma, angles).region;

  const deviation = (kind: 'subjective' | 'objective') => {
    const h = angles[`${kind}HorizontalDeg`];
    const v = angles[`${kind}VerticalPd`];
    const t = angles[`${kind}TorsionDeg`];
    if (h == null && v == null && t == null) return 'not recorded';
    return describeDeviation({
      ...(h == null ? {} : { horizontalDeg: h }),
      ...(v == null ? {} : { verticalPd: v }),
      ...(t == null ? {} : { torsionDeg: t }),
    }).summary;
  };

  const skipped = BENCH_STEPS.filter((s) => s.collection !== null)
    .map((s) => ({ step: s, reason: benchFields(bundle, s.collection!).skippedReason }))
    .filter(
      (s, i, all) =>
        s.reason && all.findIndex((o) => o.step.collection === s.step.collection) === i,
    );

  return (
    <section className="fl-bench-step" aria-labelledby="fl-bench-step-title">
      <header className="fl-bench-step__head">
        <h2 id="fl-bench-step-title" tabIndex={-1}>
          Summary
        </h2>
      </header>
      <Caution text={CLINICAL_CAUTION} />
      {bsv.length > 0 ? (
        <div className="fl-bench-warning" role="alert">
          <strong>BSV grades disagree.</strong>
          <ul>
            {bsv.map((p) => (
              <li key={`${p.lowerGrade}-${p.higherGrade}`}>{p.message}</li>
            ))}
          </ul>
        </div>
      ) : (
        <p>BSV grades as entered are consistent (each grade present only with the one below it).</p>
      )}
      <dl className="fl-bench-summary">
        <dt>Setup</dt>
        <dd>
          Interpupillary distance{' '}
          {setup.interpupillaryDistanceMm == null
            ? 'not recorded'
            : `${setup.interpupillaryDistanceMm} mm`}
          ; own correction worn {yesNo(setup.ownCorrectionWorn)}; fixing eye{' '}
          {setup.fixingEye ?? 'not recorded'}; locked tube {setup.lockedTube ?? 'not recorded'};
          dials zeroed {yesNo(setup.dialsZeroed)}.
        </dd>
        <dt>Simultaneous perception</dt>
        <dd>
          {sp.result ? RESULT_WORDS[sp.result] : 'not recorded'}
          {sp.result === 'absent' && sp.suppressingEye ? `, suppressing: ${sp.suppressingEye}` : ''}
        </dd>
        <dt>Subjective angle</dt>
        <dd>{deviation('subjective')}</dd>
        <dt>Objective angle</dt>
        <dd>{deviation('objective')}</dd>
        <dt>Retinal correspondence</dt>
        <dd>
          {correspondence === null
            ? 'needs both horizontal angles'
            : correspondence.ok
              ? correspondence.value.message
              : correspondence.problem}
        </dd>
        <dt>Suppression scotoma</dt>
        <dd>{region ? describeRegion(region) : 'not mapped'}</dd>
        <dt>Fusion</dt>
        <dd>
          {fusion.result ? RESULT_WORDS[fusion.result] : 'not recorded'}
          {missingMarkMessage(fusion) ? `. ${missingMarkMessage(fusion)}` : ''}
        </dd>
        <dt>Fusional ranges</dt>
        <dd>
          {rangeResult === null ? (
            'not recorded'
          ) : rangeResult.ok ? (
            <>
              {rangeResult.value.amplitudes.amplitudes.map((a) => a.text).join('; ')}. Compared with{' '}
              {normsTableName()}:{' '}
              {rangeResult.value.norms.comparisons.map((c) => c.message).join(' ')}
              {rangeResult.value.norms.flags.map((flag) => ` ${flag.message}`).join('')}
            </>
          ) : (
            rangeResult.problem
          )}
        </dd>
        <dt>Gross stereopsis</dt>
        <dd>{verdict.message}</dd>
      </dl>
      {skipped.length > 0 ? (
        <>
          <h3>Not done</h3>
          <ul>
            {skipped.map(({ step, reason }) => (
              <li key={step.id}>
                {step.collection === 'amblyoscopeAngles'
                  ? 'Subjective and objective angle'
                  : step.title}
                : {reason}
              </li>
            ))}
          </ul>
        </>
      ) : null}
    </section>
  );
}
