// Small form and feedback parts shared by the identity screens: native inputs (so screen
// readers, keyboards and password managers behave as the platform does), each with its label
// and its validation message beside it, and buttons at least 48 px tall.
import {
  forwardRef,
  useId,
  type ButtonHTMLAttributes,
  type InputHTMLAttributes,
  type ReactNode,
  type SelectHTMLAttributes,
} from 'react';
import './identity.css';

interface FieldProps {
  label: string;
  error?: string | undefined;
  hint?: string;
}

export const TextField = forwardRef<
  HTMLInputElement,
  FieldProps & InputHTMLAttributes<HTMLInputElement>
>(function TextField({ label, error, hint, id, ...input }, ref) {
  const fallbackId = useId();
  const inputId = id ?? fallbackId;
  const errorId = `${inputId}-error`;
  const hintId = `${inputId}-hint`;
  const describedBy = [hint ? hintId : null, error ? errorId : null].filter(Boolean).join(' ');
  return (
    <div className="fl-id-field">
      <label htmlFor={inputId}>{label}</label>
      {hint ? (
        <p id={hintId} className="fl-id-hint">
          {hint}
        </p>
      ) : null}
      <input
        ref={ref}
        id={inputId}
        aria-invalid={error ? true : undefined}
        aria-describedby={describedBy || undefined}
        {...input}
      />
      {error ? (
        <p id={errorId} className="fl-id-error" role="alert">
          {error}
        </p>
      ) : null}
    </div>
  );
});

export const SelectField = forwardRef<
  HTMLSelectElement,
  FieldProps & SelectHTMLAttributes<HTMLSelectElement> & { children: ReactNode }
>(function SelectField({ label, error, hint, id, children, ...select }, ref) {
  const fallbackId = useId();
  const selectId = id ?? fallbackId;
  const errorId = `${selectId}-error`;
  return (
    <div className="fl-id-field">
      <label htmlFor={selectId}>{label}</label>
      {hint ? <p className="fl-id-hint">{hint}</p> : null}
      <select
        ref={ref}
        id={selectId}
        aria-invalid={error ? true : undefined}
        aria-describedby={error ? errorId : undefined}
        {...select}
      >
        {children}
      </select>
      {error ? (
        <p id={errorId} className="fl-id-error" role="alert">
          {error}
        </p>
      ) : null}
    </div>
  );
});

export function Button({
  tone = 'primary',
  type = 'button',
  ...button
}: ButtonHTMLAttributes<HTMLButtonElement> & { tone?: 'primary' | 'quiet' | 'danger' }) {
  return <button className="fl-id-button" data-tone={tone} type={type} {...button} />;
}

export function Notice({
  tone = 'info',
  children,
}: {
  tone?: 'info' | 'warning' | 'error';
  children: ReactNode;
}) {
  return (
    <div
      className="fl-id-notice"
      data-tone={tone}
      role={tone === 'error' ? 'alert' : 'status'}
      aria-live="polite"
    >
      {children}
    </div>
  );
}

/** An inline confirmation: says what will happen, then asks. */
export function Confirmation({
  title,
  children,
  confirmLabel,
  onConfirm,
  onCancel,
  busy = false,
  tone = 'danger',
}: {
  title: string;
  children: ReactNode;
  confirmLabel: string;
  onConfirm: () => void;
  onCancel: () => void;
  busy?: boolean;
  tone?: 'primary' | 'danger';
}) {
  const titleId = useId();
  return (
    <div role="alertdialog" aria-labelledby={titleId} className="fl-id-notice" data-tone="warning">
      <h3 id={titleId} style={{ marginTop: 0 }}>
        {title}
      </h3>
      <div>{children}</div>
      <div className="fl-id-row" style={{ marginTop: 12 }}>
        <Button tone={tone} onClick={onConfirm} disabled={busy}>
          {busy ? 'Working…' : confirmLabel}
        </Button>
        <Button tone="quiet" onClick={onCancel} disabled={busy}>
          Cancel
        </Button>
      </div>
    </div>
  );
}

/** Words for an error thrown by a server call. */
export function describeError(error: unknown): string {
  if (error instanceof Error && error.message) return error.message;
  return 'Something went wrong; try again.';
}
