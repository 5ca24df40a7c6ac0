// Saves a Section's fields to IndexedDB as they change: each value is checked by the shared
// schema first (a refused value stays on screen with its message and is not written), valid
// values are written after a short pause or at once when the field is left, and "Saved" shows
// only after the write resolved. Pending writes are flushed when the form goes away.
// What was entered here is shown over the stored value only while it is needed: once the person
// has left the field and its write is in IndexedDB (and the visit re-read), the field shows the
// stored value again, so a value a sync brings later (a resolved dispute, another tablet's edit)
// appears on screen instead of being hidden behind what was typed earlier.
import { validateFields, type SectionCollectionName } from '@fuselight/shared';
import { useQueryClient } from '@tanstack/react-query';
import { useCallback, useEffect, useRef, useState } from 'react';
import { useUnsavedEdits } from '../../app/unsaved-edits';
import { useEditContext } from '../../data';
import { useCharting } from '../../data/charting';
import { refreshAfterWrite } from '../../data/query-invalidation';

export type SaveStatus = 'idle' | 'waiting' | 'saving' | 'saved' | 'invalid' | 'error';

export interface SectionAutosave {
  /** The value shown for a field: what was typed here, else what is stored. */
  valueOf: (field: string) => unknown;
  /** Text typed into a field that is not (yet) a value, e.g. "12." or "abc". */
  rawOf: (field: string) => string | undefined;
  errorOf: (field: string) => string | undefined;
  /** Sets a field; `raw` keeps unparseable typing on screen with `parseError` as its message. */
  setField: (
    field: string,
    value: unknown,
    options?: { raw?: string; parseError?: string },
  ) => void;
  /** Writes what is waiting now (on leaving a field); left fields then show the stored value. */
  flush: () => void;
  status: SaveStatus;
  saveError: string | null;
}

const PAUSE_MS = 400;

export function useSectionAutosave(
  visitId: string,
  collection: SectionCollectionName,
  stored: Record<string, unknown> | undefined,
  onStatus?: (status: SaveStatus) => void,
): SectionAutosave {
  const charting = useCharting();
  const editContext = useEditContext();
  const queryClient = useQueryClient();
  const [local, setLocal] = useState<Record<string, unknown>>({});
  const localRef = useRef<Record<string, unknown>>({});
  /** Fields the person has left since last editing them. */
  const left = useRef(new Set<string>());
  /** Writes on their way to IndexedDB, by field. */
  const flight = useRef(new Map<string, number>());
  const [raw, setRaw] = useState<Record<string, string>>({});
  const [errors, setErrors] = useState<Record<string, string>>({});
  const [status, setStatus] = useState<SaveStatus>('idle');
  const [saveError, setSaveError] = useState<string | null>(null);
  const waiting = useRef<Record<string, unknown>>({});
  const timer = useRef<ReturnType<typeof setTimeout> | null>(null);
  const inFlight = useRef(0);
  const invalid = useRef(new Set<string>());
  // Typed and not yet written, or refused and still on screen: no app update now.
  useUnsavedEdits(status !== 'idle' && status !== 'saved');

  const report = useCallback(
    (next: SaveStatus) => {
      setStatus(next);
      onStatus?.(next);
    },
    [onStatus],
  );

  /** Stops laying over the stored value the fields that were left and whose writes are done. */
  const release = useCallback(() => {
    const done = Object.keys(localRef.current).filter(
      (field) =>
        left.current.has(field) &&
        !(field in waiting.current) &&
        !flight.current.has(field) &&
        !invalid.current.has(field),
    );
    if (done.length === 0) return;
    const without = <T>(current: Record<string, T>) => {
      const next = { ...current };
      for (const field of done) delete next[field];
      return next;
    };
    for (const field of done) left.current.delete(field);
    localRef.current = without(localRef.current);
    setLocal(localRef.current);
    setRaw(without);
  }, []);

  const write = useCallback(() => {
    if (timer.current) {
      clearTimeout(timer.current);
      timer.current = null;
    }
    const fields = waiting.current;
    if (Object.keys(fields).length === 0) return;
    waiting.current = {};
    inFlight.current += 1;
    report('saving');
    let ctx;
    try {
      ctx = editContext();
    } catch (error) {
      inFlight.current -= 1;
      waiting.current = { ...fields, ...waiting.current };
      setSaveError(error instanceof Error ? error.message : String(error));
      report('error');
      return;
    }
    const names = Object.keys(fields);
    for (const name of names) flight.current.set(name, (flight.current.get(name) ?? 0) + 1);
    const landed = () => {
      for (const name of names) {
        const remaining = (flight.current.get(name) ?? 1) - 1;
        if (remaining > 0) flight.current.set(name, remaining);
        else flight.current.delete(name);
      }
    };
    charting
      .saveSection(visitId, collection, fields, ctx)
      .then(async (recordId) => {
        // Re-read this Section before showing its stored values in place of what was typed.
        await refreshAfterWrite(queryClient, {
          collections: [collection],
          recordIds: [recordId],
          outbox: true,
        }).catch(() => undefined);
        landed();
        inFlight.current -= 1;
        setSaveError(null);
        if (inFlight.current === 0 && Object.keys(waiting.current).length === 0) {
          report(invalid.current.size > 0 ? 'invalid' : 'saved');
        }
        release();
      })
      .catch((error: unknown) => {
        landed();
        inFlight.current -= 1;
        // Keep the values waiting so the next change or leaving the field tries again.
        waiting.current = { ...fields, ...waiting.current };
        setSaveError(error instanceof Error ? error.message : String(error));
        report('error');
      });
  }, [charting, collection, editContext, queryClient, release, report, visitId]);

  const setField = useCallback<SectionAutosave['setField']>(
    (field, value, options = {}) => {
      left.current.delete(field);
      localRef.current = { ...localRef.current, [field]: value };
      setLocal(localRef.current);
      setRaw((current) => {
        const next = { ...current };
        if (options.raw === undefined) delete next[field];
        else next[field] = options.raw;
        return next;
      });
      let message = options.parseError;
      if (message === undefined) {
        const checked = validateFields(collection, { [field]: value });
        if (!checked.ok) message = checked.errors.map((e) => e.message).join('; ');
      }
      setErrors((current) => {
        const next = { ...current };
        if (message === undefined) delete next[field];
        else next[field] = message;
        return next;
      });
      if (message !== undefined) {
        invalid.current.add(field);
        delete waiting.current[field];
        report('invalid');
        return;
      }
      invalid.current.delete(field);
      waiting.current[field] = value;
      report('waiting');
      if (timer.current) clearTimeout(timer.current);
      timer.current = setTimeout(write, PAUSE_MS);
    },
    [collection, report, write],
  );

  const flush = useCallback(() => {
    for (const field of Object.keys(localRef.current)) left.current.add(field);
    write();
    release();
  }, [release, write]);

  // Leaving the screen must not drop a value typed in the last pause.
  const writeRef = useRef(write);
  useEffect(() => {
    writeRef.current = write;
  }, [write]);
  useEffect(() => () => writeRef.current(), []);

  return {
    valueOf: (field) => (field in local ? local[field] : (stored?.[field] ?? null)),
    rawOf: (field) => raw[field],
    errorOf: (field) => errors[field],
    setField,
    flush,
    status,
    saveError,
  };
}

export function saveStatusWords(status: SaveStatus, saveError: string | null): string {
  switch (status) {
    case 'idle':
      return '';
    case 'waiting':
    case 'saving':
      return 'Saving…';
    case 'saved':
      return 'Saved on this tablet';
    case 'invalid':
      return 'A value needs fixing; it is not saved yet';
    case 'error':
      return `Not saved: ${saveError ?? 'unknown error'}`;
  }
}
