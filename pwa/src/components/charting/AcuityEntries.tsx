// Visual acuity entry: one box per eye, distance or near, and correction, that takes the
// notation as written (6/12, 20/40, 0.5, 70 letters, 0.3 logMAR) and stores it beside its
// logMAR as read by the shared acuity parser. Text that is no acuity notation (e.g. "CF") is
// kept as written, with no logMAR, and the box says so.
import { nearestSnellenLine, parseAcuity } from '@fuselight/shared';
import { useId, useState } from 'react';
import { DisputeMark } from './ScreenState';
import type { SectionAutosave } from './useSectionAutosave';

const EYES = [
  ['right', 'Right eye'],
  ['left', 'Left eye'],
] as const;
const PLACES = [
  ['Distance', 'distance'],
  ['Near', 'near'],
] as const;
const KINDS = [
  ['Uncorrected', 'uncorrected'],
  ['Corrected', 'corrected'],
  ['Pinhole', 'pinhole'],
] as const;

function readAcuity(text: string): { logMAR: number | null; note: string; problem: boolean } {
  if (text.trim() === '') return { logMAR: null, note: '', problem: false };
  try {
    const parsed = parseAcuity(text);
    const line = nearestSnellenLine(parsed.logMAR, '6 m');
    return {
      logMAR: parsed.logMAR,
      note: `${parsed.logMAR.toFixed(2)} logMAR (Snellen ${line.label})`,
      problem: false,
    };
  } catch (error) {
    const why = error instanceof Error ? error.message : String(error);
    return { logMAR: null, note: `Kept as written, no logMAR: ${why}`, problem: true };
  }
}

function AcuityBox({
  base,
  label,
  autosave,
  conflicts,
  locked,
}: {
  base: string;
  label: string;
  autosave: SectionAutosave;
  conflicts: readonly string[];
  locked: boolean;
}) {
  const id = useId();
  const notationField = `${base}Notation`;
  const logMarField = `${base}LogMar`;
  const stored = autosave.valueOf(notationField);
  const storedLogMar = autosave.valueOf(logMarField);
  const text = autosave.rawOf(notationField) ?? (typeof stored === 'string' ? stored : '');
  const [reading, setReading] = useState<{ note: string; problem: boolean } | null>(null);
  const shownNote =
    reading?.note ?? (typeof storedLogMar === 'number' ? `${storedLogMar.toFixed(2)} logMAR` : '');
  const error = autosave.errorOf(notationField) ?? autosave.errorOf(logMarField);
  return (
    <div className="flc-field">
      <label htmlFor={id}>
        {label}
        <DisputeMark field={notationField} conflicts={conflicts} />
        <DisputeMark field={logMarField} conflicts={conflicts} />
      </label>
      <input
        id={id}
        className="flc-input"
        type="text"
        autoComplete="off"
        disabled={locked}
        value={text}
        placeholder="6/6, 20/20, 1.0, 85 letters"
        aria-invalid={error || reading?.problem ? 'true' : 'false'}
        aria-describedby={`${id}-message`}
        onBlur={() => autosave.flush()}
        onChange={(event) => {
          const next = event.target.value;
          const read = readAcuity(next);
          setReading(read);
          autosave.setField(notationField, next.trim() === '' ? null : next, { raw: next });
          autosave.setField(logMarField, read.logMAR);
        }}
      />
      <p
        id={`${id}-message`}
        className={`flc-message${error || reading?.problem ? ' flc-message--error' : ''}`}
      >
        {error ?? shownNote}
      </p>
    </div>
  );
}

export function AcuityEntries({
  autosave,
  conflicts,
  locked,
}: {
  autosave: SectionAutosave;
  conflicts: readonly string[];
  locked: boolean;
}) {
  return (
    <>
      {EYES.map(([eye, eyeWords]) => (
        <fieldset key={eye} className="flc-choice">
          <legend>{eyeWords}</legend>
          <div className="flc-grid">
            {PLACES.map(([place, placeWords]) =>
              KINDS.map(([kind, kindWords]) => (
                <AcuityBox
                  key={`${place}${kind}`}
                  base={`${eye}${place}${kind}`}
                  label={`${eyeWords}, ${placeWords}, ${kindWords}`}
                  autosave={autosave}
                  conflicts={conflicts}
                  locked={locked}
                />
              )),
            )}
          </div>
        </fieldset>
      ))}
    </>
  );
}
