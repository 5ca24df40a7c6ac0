// Forced-choice gross stereopsis trials: tells the clinician which slide to show next, in an
// order the patient cannot predict (stereoTrialSequence with crypto randomness unless a test
// injects its own), records the patient's answer and shows the verdict live (stereoVerdict).
import {
  type GrossStereoTrial,
  MAX_STEREO_TRIALS,
  type StereoPresentation,
  stereoChanceTailFraction,
  stereoTrialSequence,
  stereoVerdict,
} from '@fuselight/shared';
import { useRef, useState, type ReactNode } from 'react';
import { useBenchAction } from '../../../components/controls/bench-action';
import { Caution } from '../StepFrame';

/** Uniform in [0, 1) from the platform's cryptographic generator. */
export function cryptoRandom(): number {
  const [word] = crypto.getRandomValues(new Uint32Array(1));
  return (word ?? 0) / 2 ** 32;
}

const WORDS: Record<StereoPresentation, string> = {
  toward: 'toward the patient',
  away: 'away from the patient',
};

/** The schema keeps at most 200 trials; no sitting runs that long. */
const SEQUENCE_LENGTH = Math.min(200, MAX_STEREO_TRIALS);

export interface StereoTrialRunnerProps {
  trials: readonly GrossStereoTrial[];
  onRecord: (trials: GrossStereoTrial[]) => void;
  /** Injected in tests to replay an order; the Bench uses cryptoRandom. */
  random?: () => number;
  alpha?: number;
  /** Drawn under the answers and Undo (the step's slide-used field). */
  beside?: ReactNode;
}

export function StereoTrialRunner({
  trials,
  onRecord,
  random = cryptoRandom,
  alpha,
  beside,
}: StereoTrialRunnerProps) {
  // Trials already on the chart were shown from an earlier order; this run's order starts here.
  const [start] = useState(trials.length);
  const [sequence] = useState(() => stereoTrialSequence(SEQUENCE_LENGTH, random));
  const index = Math.max(0, trials.length - start);
  const next = sequence[index] ?? null;
  const verdict = stereoVerdict(trials, alpha === undefined ? {} : { alpha });
  const fraction = stereoChanceTailFraction(verdict.correct, verdict.total);

  const answer = (said: StereoPresentation) => {
    if (next === null) return;
    onRecord([...trials, { presented: next, answer: said, correct: next === said }]);
  };

  // The stereo keys of the Bench: the patient's answer, then what to show next, in words.
  const root = useRef<HTMLDivElement>(null);
  useBenchAction(root, (action) => {
    if (action !== 'stereoToward' && action !== 'stereoAway') return undefined;
    if (next === null) return 'The trial limit is reached.';
    const said: StereoPresentation = action === 'stereoToward' ? 'toward' : 'away';
    const after = [...trials, { presented: next, answer: said, correct: next === said }];
    answer(said);
    const tally = stereoVerdict(after, alpha === undefined ? {} : { alpha });
    const following = sequence[after.length - start];
    return `Trial ${trials.length + 1}: patient says ${said}, ${next === said ? 'right' : 'wrong'}. ${tally.correct} of ${tally.total} right${tally.verdict === 'present' ? ', gross stereopsis shown' : ''}.${following ? ` Next: show ${WORDS[following]}.` : ''}`;
  });

  return (
    <div className="fl-stereo" ref={root} data-bench-handler>
      {/* Two columns that do not share rows: the presentation, the answers, Undo and the slide
          used on the left never move as the result and the list of trials change on the right. */}
      <div className="fl-stereo__column">
        <div className="fl-stereo__next" aria-live="polite" data-testid="stereo-next">
          {next === null ? (
            <p>The trial limit is reached.</p>
          ) : (
            <>
              <p className="fl-muted">Trial {trials.length + 1}: show the slide that stands out</p>
              <p className="fl-stereo__presentation">{WORDS[next]}</p>
              <p className="fl-muted">Then ask the patient which way the picture stands out.</p>
            </>
          )}
        </div>
        <div className="fl-stereo__answers" role="group" aria-label="The patient's answer">
          <button
            type="button"
            className="fl-touch fl-button fl-button--primary fl-stereo__answer"
            disabled={next === null}
            onClick={() => answer('toward')}
          >
            Patient says: toward
          </button>
          <button
            type="button"
            className="fl-touch fl-button fl-button--primary fl-stereo__answer"
            disabled={next === null}
            onClick={() => answer('away')}
          >
            Patient says: away
          </button>
        </div>
        <div className="fl-stereo__under">
          <button
            type="button"
            className="fl-touch fl-button fl-button--quiet fl-stereo__undo"
            disabled={trials.length === 0}
            onClick={() => onRecord(trials.slice(0, -1))}
          >
            Undo last trial
          </button>
          {beside}
        </div>
      </div>
      <div className="fl-stereo__column">
        <div className="fl-bench-result" aria-live="polite" data-testid="stereo-verdict">
          <h3>
            {verdict.verdict === 'present'
              ? 'Gross stereopsis shown'
              : 'Gross stereopsis not shown yet'}
          </h3>
          <p>
            {verdict.correct} of {verdict.total} right. Chance of doing this well by guessing:{' '}
            <span data-testid="stereo-chance">
              {String(fraction.numerator)}/{String(fraction.denominator)} = {verdict.chanceTail}
            </span>{' '}
            (threshold {verdict.alpha}).
          </p>
          {verdict.verdict === 'present' ? null : (
            <p className="fl-stereo__more" data-testid="stereo-more-needed">
              {verdict.moreCorrectNeeded} more right answer
              {verdict.moreCorrectNeeded === 1 ? '' : 's'} in a row needed to show gross stereopsis.
            </p>
          )}
          <Caution text={verdict.caution} />
        </div>
        {trials.length > 0 ? (
          <ol className="fl-stereo__log" aria-label="Trials so far">
            {trials.map((trial, i) => (
              <li key={i}>
                Shown {trial.presented}, patient said {trial.answer}:{' '}
                {trial.correct ? 'right' : 'wrong'}
              </li>
            ))}
          </ol>
        ) : null}
      </div>
    </div>
  );
}
