// One Bench step's Section: the stored fields with the edits still being written laid over
// them, a save that resolves only when the edit and its Outbox entry are in IndexedDB, and a
// save state the screen shows ("Saving…", "Saved", or what went wrong, keeping the entry).
import { useQueryClient } from '@tanstack/react-query';
import { createContext, useCallback, useContext, useLayoutEffect, useRef, useState } from 'react';
import { useUnsavedEdits } from '../../app/unsaved-edits';
import { type VisitBundle, useCharting, useVisitBundle } from '../charting';
import { useEditContext } from '../hooks/useRecordMutations';
import { refreshAfterWrite } from '../query-invalidation';
import { RecordValidationError } from '../records-repository';
import { type BenchCollection, type BenchFields, benchFields } from './bench-sections';

export type SaveState =
  | { state: 'idle' }
  | { state: 'saving' }
  | { state: 'saved'; atMs: number }
  | { state: 'error'; message: string; field: string | null };

/** One saved entry of a Bench sitting, with the values it replaced, so Undo can put them back. */
export interface BenchJournalEntry {
  collection: BenchCollection;
  /** The fields' values before the entry (null: not recorded). */
  previous: Record<string, unknown>;
  revert: () => Promise<boolean>;
}

/** Where the Bench keeps its sitting's entries for Undo (absent outside the Bench). */
export const BenchJournalContext = createContext<((entry: BenchJournalEntry) => void) | null>(null);

export interface BenchSection<C extends BenchCollection> {
  /** Stored fields with unconfirmed edits laid over them (what the clinician just entered). */
  fields: BenchFields<C>;
  /** Saves changed fields; resolves true once they are in IndexedDB, false if refused. */
  save: (changes: Partial<BenchFields<C>>, options?: { journal?: boolean }) => Promise<boolean>;
  saveState: SaveState;
  recordId: string | null;
  /** The whole visit (patient, other Sections) for cross-step checks; undefined while loading. */
  bundle: VisitBundle | null | undefined;
  loading: boolean;
}

function messageOf(error: unknown): { message: string; field: string | null } {
  if (error instanceof RecordValidationError) {
    return { message: error.errors.map((e) => e.message).join('; '), field: error.field || null };
  }
  return { message: error instanceof Error ? error.message : String(error), field: null };
}

export function useBenchSection<C extends BenchCollection>(
  visitId: string,
  collection: C,
): BenchSection<C> {
  const bundle = useVisitBundle(visitId);
  const charting = useCharting();
  const editContext = useEditContext();
  const queryClient = useQueryClient();
  const [overlay, setOverlay] = useState<Partial<BenchFields<C>>>({});
  const [saveState, setSaveState] = useState<SaveState>({ state: 'idle' });
  const inFlight = useRef(0);
  // A save on its way, or one refused with the values still on screen: no app update now.
  useUnsavedEdits(saveState.state === 'saving' || saveState.state === 'error');
  const journal = useContext(BenchJournalContext);

  const stored = benchFields(bundle.data, collection);
  const fields = { ...stored, ...overlay } as BenchFields<C>;
  // The values an entry replaces are those on screen when it is made (for Undo).
  const latestFields = useRef(fields);
  useLayoutEffect(() => {
    latestFields.current = fields;
  });
  const saveRef = useRef<BenchSection<C>['save'] | null>(null);

  const save = useCallback(
    async (
      changes: Partial<BenchFields<C>>,
      options: { journal?: boolean } = {},
    ): Promise<boolean> => {
      if (journal && options.journal !== false) {
        const before = latestFields.current as Record<string, unknown>;
        const previous = Object.fromEntries(
          Object.keys(changes).map((name) => [name, before[name] ?? null]),
        );
        journal({
          collection,
          previous,
          revert: () =>
            saveRef.current?.(previous as Partial<BenchFields<C>>, { journal: false }) ??
            Promise.resolve(false),
        });
      }
      setOverlay((current) => ({ ...current, ...changes }));
      setSaveState({ state: 'saving' });
      inFlight.current += 1;
      try {
        const recordId = await charting.saveSection(visitId, collection, changes, editContext());
        // Wait for this Section's query to read the record again (only it: the other Sections
        // of the visit did not change).
        await refreshAfterWrite(queryClient, {
          collections: [collection],
          recordIds: [recordId],
          outbox: true,
        });
        // The stored record now holds these values; drop them from the overlay unless a later
        // edit of the same field is still on its way.
        setOverlay((current) => {
          const next = { ...current } as Record<string, unknown>;
          for (const [name, value] of Object.entries(changes)) {
            if (Object.is(next[name], value)) delete next[name];
          }
          return next as Partial<BenchFields<C>>;
        });
        inFlight.current -= 1;
        if (inFlight.current === 0) setSaveState({ state: 'saved', atMs: Date.now() });
        return true;
      } catch (error) {
        inFlight.current -= 1;
        // The entry stays on screen (overlay) so nothing is lost; the message says what to fix.
        setSaveState({ state: 'error', ...messageOf(error) });
        return false;
      }
    },
    [charting, collection, editContext, journal, queryClient, visitId],
  );
  useLayoutEffect(() => {
    saveRef.current = save;
  }, [save]);

  return {
    fields,
    save,
    saveState,
    recordId: bundle.data?.sections[collection]?.id ?? null,
    bundle: bundle.data,
    loading: bundle.isPending,
  };
}
