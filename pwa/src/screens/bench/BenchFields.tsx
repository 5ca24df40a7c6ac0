// Plain text and number entries for the Bench that save when the clinician leaves the field or
// presses Enter. A wrong number is refused with the field's name and kept on screen.
import { describeRange, type FieldMeta } from '@fuselight/shared';
import { useId, useState } from 'react';

export function BenchTextField({
  label,
  value,
  onSave,
  maxLength = 120,
  error,
}: {
  label: string;
  value: string | null | undefined;
  onSave: (value: string | null) => void;
  maxLength?: number;
  error?: string | null;
}) {
  const id = useId();
  const [draft, setDraft] = useState<string | null>(null);
  const shown = draft ?? value ?? '';
  const commit = () => {
    if (draft === null) return;
    const trimmed = draft.trim();
    const next = trimmed === '' ? null : trimmed;
    setDraft(null);
    if (next !== (value ?? null)) onSave(next);
  };
  return (
    <div className="fl-bench-field">
      <label htmlFor={id}>{label}</label>
      <input
        id={id}
        className="fl-touch fl-input"
        value={shown}
        maxLength={maxLength}
        aria-invalid={error ? true : undefined}
        aria-describedby={error ? `${id}-error` : undefined}
        onChange={(event) => setDraft(event.target.value)}
        onBlur={commit}
        onKeyDown={(event) => {
          if (event.key === 'Enter') {
            event.preventDefault();
            commit();
          }
        }}
      />
      {error ? (
        <p id={`${id}-error`} role="alert" className="fl-field-error">
          {error}
        </p>
      ) : null}
    </div>
  );
}

export function BenchNumberField({
  meta,
  value,
  onSave,
  error,
}: {
  meta: FieldMeta;
  value: number | null | undefined;
  onSave: (value: number | null) => void;
  error?: string | null;
}) {
  const id = useId();
  const [draft, setDraft] = useState<string | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  const shown = draft ?? (value == null ? '' : String(value));
  const unit = meta.unit ?? '';
  const commit = () => {
    if (draft === null) return;
    const trimmed = draft.trim().replace(',', '.');
    if (trimmed === '') {
      setProblem(null);
      setDraft(null);
      if (value != null) onSave(null);
      return;
    }
    const number = Number(trimmed);
    if (!/^-?\d+(\.\d+)?$/.test(trimmed) || !Number.isFinite(number)) {
      setProblem(`${meta.label}: “${draft.trim()}” is not a number; type a number such as 62`);
      return;
    }
    if (
      (meta.min !== undefined && number < meta.min) ||
      (meta.max !== undefined && number > meta.max)
    ) {
      setProblem(
        `${meta.label} must be ${describeRange(meta.min ?? -Infinity, meta.max ?? Infinity, meta.unit)} (you typed ${draft.trim()})`,
      );
      return;
    }
    setProblem(null);
    setDraft(null);
    if (number !== value) onSave(number);
  };
  const message = problem ?? error ?? null;
  return (
    <div className="fl-bench-field">
      <label htmlFor={id}>
        {meta.label}
        {unit ? ` (${unit})` : ''}
      </label>
      <input
        id={id}
        className="fl-touch fl-input"
        inputMode="decimal"
        value={shown}
        aria-invalid={message ? true : undefined}
        aria-describedby={message ? `${id}-error` : undefined}
        onChange={(event) => setDraft(event.target.value)}
        onBlur={commit}
        onKeyDown={(event) => {
          if (event.key === 'Enter') {
            event.preventDefault();
            commit();
          }
        }}
      />
      {message ? (
        <p id={`${id}-error`} role="alert" className="fl-field-error">
          {message}
        </p>
      ) : null}
    </div>
  );
}
