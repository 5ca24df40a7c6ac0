// Recording a step as not done, with the reason the chart will carry ("not tested: patient
// tired"), and taking it back to test it after all. The step's header holds the Skip button; the
// reasons take the step's place while they are open, so the step still fits one screen.
import { useEffect, useId, useRef, useState } from 'react';

const QUICK_REASONS = [
  'patient tired',
  'patient not cooperating',
  'not indicated today',
  'instrument unavailable',
];

export function SkipButton({ stepTitle, onOpen }: { stepTitle: string; onOpen: () => void }) {
  return (
    <button type="button" className="fl-touch fl-button fl-button--quiet" onClick={onOpen}>
      Skip {stepTitle.toLowerCase()}…
    </button>
  );
}

export function SkippedNote({
  stepTitle,
  skippedReason,
  onResume,
}: {
  stepTitle: string;
  skippedReason: string;
  onResume: () => Promise<boolean> | void;
}) {
  return (
    <div className="fl-bench-skipped" role="region" aria-label={`${stepTitle} not done`}>
      <p>
        <strong>Not done:</strong> {skippedReason}
      </p>
      <button
        type="button"
        className="fl-touch fl-button"
        data-bench-target
        onClick={() => void onResume()}
      >
        Test {stepTitle.toLowerCase()} now
      </button>
    </div>
  );
}

export interface SkipFormProps {
  stepTitle: string;
  onSkip: (reason: string) => Promise<boolean> | void;
  onClose: () => void;
  /** Extra words, e.g. that two steps share a Section. */
  note?: string | undefined;
}

export function SkipForm({ stepTitle, onSkip, onClose, note }: SkipFormProps) {
  const [reason, setReason] = useState('');
  const [problem, setProblem] = useState<string | null>(null);
  const inputId = useId();
  const errorId = `${inputId}-error`;
  const first = useRef<HTMLButtonElement>(null);
  useEffect(() => {
    first.current?.focus();
  }, []);

  const submit = (text: string) => {
    const trimmed = text.trim();
    if (trimmed === '') {
      setProblem('Reason not done cannot be empty: say why the step was not done.');
      return;
    }
    setProblem(null);
    setReason('');
    onClose();
    void onSkip(`not tested: ${trimmed}`);
  };

  return (
    <form
      className="fl-bench-skip"
      aria-label={`Skip ${stepTitle.toLowerCase()}`}
      onSubmit={(event) => {
        event.preventDefault();
        submit(reason);
      }}
    >
      <p className="fl-muted">{note ?? 'Why was this step not done?'}</p>
      <div className="fl-choice__options">
        {QUICK_REASONS.map((quick, i) => (
          <button
            key={quick}
            ref={i === 0 ? first : undefined}
            type="button"
            className="fl-touch fl-button"
            data-bench-target
            onClick={() => submit(quick)}
          >
            Not tested: {quick}
          </button>
        ))}
      </div>
      <label htmlFor={inputId}>Other reason</label>
      <input
        id={inputId}
        className="fl-touch fl-input"
        data-bench-target
        value={reason}
        maxLength={480}
        aria-invalid={problem !== null || undefined}
        aria-describedby={problem ? errorId : undefined}
        onChange={(event) => setReason(event.target.value)}
      />
      {problem ? (
        <p id={errorId} role="alert" className="fl-field-error">
          {problem}
        </p>
      ) : null}
      <div className="fl-choice__options">
        <button type="submit" className="fl-touch fl-button fl-button--primary" data-bench-target>
          Record as not tested
        </button>
        <button
          type="button"
          className="fl-touch fl-button fl-button--quiet"
          data-bench-target
          onClick={() => {
            setProblem(null);
            onClose();
          }}
        >
          Cancel
        </button>
      </div>
    </form>
  );
}
