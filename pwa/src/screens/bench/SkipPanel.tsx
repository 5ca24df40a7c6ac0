// Recording a step as not done, with the reason the chart will carry ("not tested: patient
// tired"), and taking it back to test it after all.
import { useId, useState } from 'react';

const QUICK_REASONS = [
  'patient tired',
  'patient not cooperating',
  'not indicated today',
  'instrument unavailable',
];

export interface SkipPanelProps {
  stepTitle: string;
  skippedReason: string | null | undefined;
  onSkip: (reason: string) => Promise<boolean> | void;
  onResume: () => Promise<boolean> | void;
  /** Extra words, e.g. that two steps share a Section. */
  note?: string;
}

export function SkipPanel({ stepTitle, skippedReason, onSkip, onResume, note }: SkipPanelProps) {
  const [open, setOpen] = useState(false);
  const [reason, setReason] = useState('');
  const [problem, setProblem] = useState<string | null>(null);
  const inputId = useId();
  const errorId = `${inputId}-error`;

  if (skippedReason) {
    return (
      <div className="fl-bench-skipped" role="region" aria-label={`${stepTitle} not done`}>
        <p>
          <strong>Not done:</strong> {skippedReason}
        </p>
        <button type="button" className="fl-touch fl-button" onClick={() => void onResume()}>
          Test {stepTitle.toLowerCase()} now
        </button>
      </div>
    );
  }

  const submit = (text: string) => {
    const trimmed = text.trim();
    if (trimmed === '') {
      setProblem('Reason not done cannot be empty: say why the step was not done.');
      return;
    }
    setProblem(null);
    setOpen(false);
    setReason('');
    void onSkip(`not tested: ${trimmed}`);
  };

  if (!open) {
    return (
      <button
        type="button"
        className="fl-touch fl-button fl-button--quiet"
        onClick={() => setOpen(true)}
      >
        Skip {stepTitle.toLowerCase()}…
      </button>
    );
  }

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
        {QUICK_REASONS.map((quick) => (
          <button
            key={quick}
            type="button"
            className="fl-touch fl-button"
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
        <button type="submit" className="fl-touch fl-button fl-button--primary">
          Record as not tested
        </button>
        <button
          type="button"
          className="fl-touch fl-button fl-button--quiet"
          onClick={() => {
            setOpen(false);
            setProblem(null);
          }}
        >
          Cancel
        </button>
      </div>
    </form>
  );
}
