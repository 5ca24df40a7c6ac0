import type { ReactNode } from 'react';
import type { BenchCollection, BenchSection } from '../../data/bench';
import { SaveStatus } from './SaveStatus';
import { SkipPanel } from './SkipPanel';

/** A Bench step: what to do, the entries, the save state and skipping with a reason. */
export function StepFrame<C extends BenchCollection>({
  title,
  instructions,
  section,
  skipNote,
  children,
}: {
  title: string;
  instructions: ReactNode;
  section: BenchSection<C>;
  skipNote?: string;
  children: ReactNode;
}) {
  const skippedReason = (section.fields as { skippedReason?: string | null }).skippedReason;
  return (
    <section className="fl-bench-step" aria-labelledby="fl-bench-step-title">
      <header className="fl-bench-step__head">
        <h2 id="fl-bench-step-title" tabIndex={-1}>
          {title}
        </h2>
        <SaveStatus saveState={section.saveState} hasRecord={section.recordId !== null} />
      </header>
      <div className="fl-bench-step__instructions">{instructions}</div>
      {skippedReason ? null : <div className="fl-bench-step__body">{children}</div>}
      <SkipPanel
        stepTitle={title}
        skippedReason={skippedReason}
        note={skipNote}
        onSkip={(reason) =>
          section.save({ skippedReason: reason } as Parameters<typeof section.save>[0])
        }
        onResume={() => section.save({ skippedReason: null } as Parameters<typeof section.save>[0])}
      />
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
