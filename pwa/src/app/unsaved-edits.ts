// What is on screen and not yet in IndexedDB: a form with changes not saved (react-hook-form's
// isDirty), a Section value typed and not yet written, or refused and still shown. Forms hold a
// mark while they have such edits; the app update waits until none is held (update-gate.ts), so
// the reload that an update needs never throws away what a person typed.
import { useEffect } from 'react';

export class UnsavedEdits {
  private readonly holders = new Set<symbol>();
  private readonly listeners = new Set<() => void>();

  /** Marks unsaved edits on screen; the returned function lifts this mark (once). */
  hold(): () => void {
    const holder = Symbol('unsaved edits');
    this.holders.add(holder);
    this.changed();
    return () => {
      if (this.holders.delete(holder)) this.changed();
    };
  }

  /** True while any form holds unsaved edits. */
  any(): boolean {
    return this.holders.size > 0;
  }

  subscribe(listener: () => void): () => void {
    this.listeners.add(listener);
    return () => {
      this.listeners.delete(listener);
    };
  }

  private changed(): void {
    for (const listener of [...this.listeners]) listener();
  }
}

/** The app's one register of unsaved edits. */
export const unsavedEdits = new UnsavedEdits();

/** Holds a mark on `register` while `unsaved` is true (and lifts it when the form goes away). */
export function useUnsavedEdits(unsaved: boolean, register: UnsavedEdits = unsavedEdits): void {
  useEffect(() => {
    if (!unsaved) return undefined;
    return register.hold();
  }, [unsaved, register]);
}
