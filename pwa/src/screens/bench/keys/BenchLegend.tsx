// Which key does what on the Bench for the control in use (the person's own keys), small enough
// to sit under the step list; it can be hidden, and the full list is on the You screen.
import { type BenchAction, type BenchKeyMap, shortKeyLabel } from './bench-key-map';

export type TargetKind = 'angle' | 'choice' | 'text' | 'button' | 'none';

const line = (
  keys: BenchKeyMap,
  actions: readonly BenchAction[],
  words: string,
): { keys: string[]; words: string } | null => {
  const first = actions.map((a) => keys[a][0]).filter((k): k is string => k !== undefined);
  return first.length === 0 ? null : { keys: first.map(shortKeyLabel), words };
};

export function BenchLegend({
  keys,
  kind,
  stepActions,
  shown,
  onToggle,
}: {
  keys: BenchKeyMap;
  kind: TargetKind;
  /** Actions the step itself offers (marks, stereo answers). */
  stepActions: readonly BenchAction[];
  shown: boolean;
  onToggle: () => void;
}) {
  const lines = [
    ...(kind === 'angle'
      ? [
          line(keys, ['stepUpMedium', 'stepDownMedium'], '±1'),
          line(keys, ['stepUpSmall', 'stepDownSmall'], '±0.5'),
          line(keys, ['stepUpLarge', 'stepDownLarge'], '±5'),
          line(keys, ['toggleSign'], 'sign'),
        ]
      : kind === 'choice'
        ? [line(keys, ['stepUpMedium', 'stepDownMedium'], 'answer')]
        : kind === 'text'
          ? [{ keys: ['Enter'], words: 'save' }]
          : kind === 'button'
            ? [{ keys: ['Enter'], words: 'press' }]
            : []),
    ...(stepActions.includes('markLost') ? [line(keys, ['markLost'], 'lost')] : []),
    ...(stepActions.includes('markBreak') ? [line(keys, ['markBreak'], 'break')] : []),
    ...(stepActions.includes('markRecovery') ? [line(keys, ['markRecovery'], 'recovery')] : []),
    ...(stepActions.includes('stereoToward')
      ? [line(keys, ['stereoToward', 'stereoAway'], 'toward / away')]
      : []),
    line(keys, ['nextControl', 'previousControl'], 'control'),
    line(keys, ['nextStep', 'previousStep'], 'step'),
    line(keys, ['undo'], 'undo'),
    line(keys, ['skipStep'], 'skip'),
    line(keys, ['syncNow'], 'sync'),
    line(keys, ['leaveBench'], 'leave'),
  ].filter((l): l is { keys: string[]; words: string } => l !== null);

  return (
    <aside className="fl-bench-legend" aria-labelledby="fl-bench-legend-title">
      <div className="fl-bench-legend__head">
        <h2 id="fl-bench-legend-title" className="fl-bench-legend__title">
          Keys
        </h2>
        <button
          type="button"
          className="fl-bench-legend__toggle"
          aria-expanded={shown}
          aria-controls="fl-bench-legend-list"
          onClick={onToggle}
        >
          {shown ? 'Hide' : 'Show'}
        </button>
      </div>
      {shown ? (
        <dl id="fl-bench-legend-list" className="fl-bench-legend__list">
          {lines.map((l) => (
            <div key={l.words}>
              <dt>
                {l.keys.map((k, i) => (
                  <span key={k}>
                    {i > 0 ? '/' : ''}
                    <kbd>{k}</kbd>
                  </span>
                ))}
              </dt>
              <dd>{l.words}</dd>
            </div>
          ))}
        </dl>
      ) : null}
    </aside>
  );
}
