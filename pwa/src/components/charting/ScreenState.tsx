// Loading, error and empty states in words, shared by the charting screens.
import type { ReactNode } from 'react';

export function LoadingState({ children }: { children: ReactNode }) {
  return (
    <p className="flc-state" role="status" aria-live="polite">
      {children}
    </p>
  );
}

export function ErrorState({ title, error }: { title: string; error: unknown }) {
  const detail = error instanceof Error ? error.message : String(error);
  return (
    <div className="flc-state flc-state--error" role="alert">
      <strong>{title}</strong>
      <p>{detail}</p>
      <p>Nothing you entered has been lost; try again, or reload the app.</p>
    </div>
  );
}

export function EmptyState({ children }: { children: ReactNode }) {
  return <div className="flc-state">{children}</div>;
}

const STATUS_WORDS = { draft: 'Draft', signed: 'Signed', countersigned: 'Countersigned' } as const;

export function VisitStatusBadge({ status }: { status: keyof typeof STATUS_WORDS }) {
  return <span className={`flc-badge flc-badge--${status}`}>{STATUS_WORDS[status]}</span>;
}

/** "Disputed" beside a field whose value is in an open sync conflict. */
export function DisputeMark({ field, conflicts }: { field: string; conflicts: readonly string[] }) {
  if (!conflicts.includes(field)) return null;
  return (
    <span
      className="flc-dispute"
      title="Another tablet recorded a different value; a supervisor settles it in Disputes."
    >
      Disputed
    </span>
  );
}
