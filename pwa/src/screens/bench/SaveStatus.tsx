import type { SaveState } from '../../data/bench';

/** The step's save state in words; "Saved" only once the edit is in IndexedDB. */
export function SaveStatus({ saveState, hasRecord }: { saveState: SaveState; hasRecord: boolean }) {
  switch (saveState.state) {
    case 'saving':
      return (
        <p className="fl-bench-save fl-bench-save--saving" role="status" aria-live="polite">
          Saving…
        </p>
      );
    case 'saved':
      return (
        <p className="fl-bench-save fl-bench-save--saved" role="status" aria-live="polite">
          Saved on this tablet
        </p>
      );
    case 'error':
      return (
        <p className="fl-bench-save fl-bench-save--error" role="alert">
          Not saved: {saveState.message}. Your entry is kept on screen; correct it to save.
        </p>
      );
    case 'idle':
      return (
        <p className="fl-bench-save" role="status" aria-live="polite">
          {hasRecord ? 'Saved on this tablet' : 'Nothing entered yet'}
        </p>
      );
  }
}
