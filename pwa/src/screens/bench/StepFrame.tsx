import { type ReactNode, useRef, useState } from 'react';
import { useBenchAction } from '../../components/controls/bench-action';
import type { BenchCollection, BenchSection } from '../../data/bench';
import { SaveStatus } from './SaveStatus';
import { SkipButton, SkipForm, SkippedNote } from './SkipPanel';

/** A Bench step: what to do, the entries, the save state and skipping with a reason. */
export function StepFrame<C extends BenchCollection>({
  title,
  instructions,
  section,
  skipNote,
  className,
  children,
}: {
  title: string;
  instructions: ReactNode;
  section: BenchSection<C>;
  skipNote?: string;
  /** A layout of the step's own (e.g. two columns), added to the body. */
  className?: string;
  children: ReactNode;
}) {
  const skippedReason = (section.fields as { skippedReason?: string | null }).skippedReason;
  const [skipping, setSkipping] = useState(false);
  const frame = useRef<HTMLElement>(null);
  useBenchAction(frame, (action) => {
    if (action !== 'skipStep') return undefined;
    if (skippedReason) return `${title} is already recorded as not done: ${skippedReason}`;
    setSkipping(true);
    return `Skip ${title.toLowerCase()}: choose the reason`;
  });
  const save = section.save as (changes: { skippedReason: string | null }) => Promise<boolean>;
  return (
    <section className="fl-bench-step" aria-labelledby="fl-bench-step-title" ref={frame}>
      <header className="fl-bench-step__head">
        <h2 id="fl-bench-step-title" tabIndex={-1}>
          {title}
        </h2>
        <SaveStatus saveState={section.saveState} hasRecord={section.recordId !== null} />
        {skippedReason || skipping ? null : (
          <SkipButton stepTitle={title} onOpen={() => setSkipping(true)} />
        )}
      </header>
      <div className="fl-bench-step__instructions">{instructions}</div>
      {skippedReason ? (
        <SkippedNote
          stepTitle={title}
          skippedReason={skippedReason}
          onResume={() => save({ skippedReason: null })}
        />
      ) : skipping ? (
        <SkipForm
          stepTitle={title}
          note={skipNote}
          onClose={() => setSkipping(false)}
          onSkip={(reason) => save({ skippedReason: reason })}
        />
      ) : (
        <div className={`fl-bench-step__body${className ? ` ${className}` : ''}`}>{children}</div>
      )}
    </section>
  );
}

/** The clinical caution shown wherever the Bench interprets findings. */
export function Caution({ text }: { text: string }) {
  return (
    <p className="fl-caution" role="note">
      {text}
    </p>
  );
}
