// A Visit panel that can fold to one line: its heading is a button that opens it in place to
// edit, and while folded a summary says what it holds (or why it was not done). Folded content
// stays mounted (hidden), so an edit waiting to be saved is never dropped by folding.
import { useId, type ReactNode } from 'react';

export interface Folding {
  open: boolean;
  onToggle: (open: boolean) => void;
  /** One line: what is recorded, or why not done. */
  summary: string;
}

export function SectionPanel({
  id,
  title,
  aside,
  folding,
  children,
}: {
  id: string;
  title: string;
  /** Beside the heading, e.g. the save indicator. */
  aside?: ReactNode;
  /** Absent: always open, as before. */
  folding?: Folding | undefined;
  children: ReactNode;
}) {
  const headingId = useId();
  const bodyId = `${id}-body`;
  const open = folding ? folding.open : true;
  return (
    <section
      className={`flc-panel${folding ? ' flc-panel--folding' : ''}`}
      aria-labelledby={headingId}
      id={id}
    >
      <header>
        <h2 id={headingId}>
          {folding ? (
            <button
              type="button"
              className="flc-fold"
              aria-expanded={open}
              aria-controls={bodyId}
              onClick={() => folding.onToggle(!open)}
            >
              {title}
            </button>
          ) : (
            title
          )}
        </h2>
        {aside}
      </header>
      {folding && !open ? <p className="flc-fold-summary">{folding.summary}</p> : null}
      <div id={bodyId} hidden={!open}>
        {children}
      </div>
    </section>
  );
}
