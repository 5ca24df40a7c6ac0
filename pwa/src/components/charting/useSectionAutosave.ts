// Saves a Section's fields to IndexedDB as they change: each value is checked by the shared
// schema first (a refused value stays on screen with its message and is not written), valid
// values are written after a short pause or at once when the field is left, and "Saved" shows
// only after the write resolved. Pending writes are flushed when the form goes away.
import { validateFields, type SectionCollectionName } from '@fuselight/shared';
import { useCallback, useEffect, useRef, useState } from 'react';
import { useEditContext } from '../../data';
import { useCharting } from '../../data/charting';

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
  /** Writes what is waiting now (on leaving a field). */
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
  const [local, setLocal] = useState<Record<string, unknown>>({});
  const [raw, setRaw] = useState<Record<string, string>>({});
  const [errors, setErrors] = useState<Record<string, string>>({});
  const [status, setStatus] = useState<SaveStatus>('idle');
  const [saveError, setSaveError] = useState<string | null>(null);
  const waiting = useRef<Record<string, unknown>>({});
  const timer = useRef<ReturnType<typeof setTimeout> | null>(null);
  const inFlight = useRef(0);
  const invalid = useRef(new Set<string>());

  const report = useCallback(
    (next: SaveStatus) => {
      setStatus(next);
      onStatus?.(next);
    },
    [onStatus],
  );

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
    charting
      .saveSection(visitId, collection, fields, ctx)
      .then(() => {
        inFlight.current -= 1;
        setSaveError(null);
        if (inFlight.current === 0 && Object.keys(waiting.current).length === 0) {
          report(invalid.current.size > 0 ? 'invalid' : 'saved');
        }
      })
      .catch((error: unknown) => {
        inFlight.current -= 1;
        // Keep the values waiting so the next change or leaving the field tries again.
        waiting.current = { ...fields, ...waiting.current };
        setSaveError(error instanceof Error ? error.message : String(error));
        report('error');
      });
  }, [charting, collection, editContext, report, visitId]);

  const setField = useCallback<SectionAutosave['setField']>(
    (field, value, options = {}) => {
      setLocal((current) => ({ ...current, [field]: value }));
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
    flush: write,
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
