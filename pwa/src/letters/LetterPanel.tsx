// The Letters panel of a Visit: draft a letter to the referrer or an exercise handout, edit its
// paragraphs, preview the PDF (drawn on the tablet, offline), finalise it (after which it is read
// only), and ask for it to be e-mailed; the delivery state comes back with sync. Plain controls in
// the Visit screen's own style (charting.css), so it reads like the Sections around it.
//
// Mount on the Visit screen: <LetterPanel visitId={visit.id} clinic={{ name, address }} />
import { IonModal } from '@ionic/react';
import type { ClinicDetails, RecordFields } from '@fuselight/shared';
import { CLINICAL_CAUTION, letterheadOf } from '@fuselight/shared';
import { useEffect, useState } from 'react';
import { useSession } from '../auth/session-context';
import {
  useEditContext,
  useRecord,
  useRecordsByField,
  useRepositories,
  type LocalRecord,
} from '../data';
import {
  deliveryWords,
  draftLetter,
  editLetter,
  finaliseLetter,
  requestSend,
} from './letter-actions';
import { letterPdfOnTablet } from './letter-sources';

export interface LetterPanelProps {
  visitId: string;
  /** The letterhead: the site's name and address from its settings. */
  clinic: ClinicDetails;
}

type EditableField = 'subject' | 'opening' | 'findingsText' | 'planText' | 'closing';

const EDITABLE: { field: EditableField; label: string }[] = [
  { field: 'subject', label: 'Subject' },
  { field: 'opening', label: 'Opening' },
  { field: 'findingsText', label: 'Note under the findings' },
  { field: 'planText', label: 'Note under the plan' },
  { field: 'closing', label: 'Closing' },
];

/** Today on the tablet's own calendar (not UTC, which is a different day late in the evening). */
function today(): string {
  const now = new Date();
  const pad = (n: number) => String(n).padStart(2, '0');
  return `${now.getFullYear()}-${pad(now.getMonth() + 1)}-${pad(now.getDate())}`;
}

function titleOf(fields: Partial<RecordFields<'letter'>>): string {
  return (
    fields.subject ??
    (fields.kind === 'handout'
      ? 'Exercise handout'
      : `Letter to ${fields.recipientName ?? 'the referrer'}`)
  );
}

function messageOf(error: unknown): string {
  return error instanceof Error ? error.message : String(error);
}

function LetterField({
  letter,
  field,
  label,
  onError,
}: {
  letter: LocalRecord<'letter'>;
  field: EditableField;
  label: string;
  onError: (message: string | null) => void;
}) {
  const { records } = useRepositories();
  const editContext = useEditContext();
  const stored = (letter.fields as Partial<RecordFields<'letter'>>)[field] ?? '';
  const [value, setValue] = useState(stored);
  const [shown, setShown] = useState(stored);
  // A value that arrives with sync (or this tablet's save) replaces what the field shows.
  if (shown !== stored) {
    setShown(stored);
    setValue(stored);
  }
  const final = letter.fields.status === 'final';
  const id = `letter-${letter.id}-${field}`;
  return (
    <div className="flc-field">
      <label htmlFor={id}>{label}</label>
      <textarea
        id={id}
        className="flc-input"
        value={value}
        readOnly={final}
        aria-readonly={final}
        onChange={(event) => setValue(event.target.value)}
        onBlur={() => {
          if (final || value === stored) return;
          const trimmed = value.trim();
          onError(null);
          editLetter(records, letter.id, { [field]: trimmed || null }, editContext()).catch(
            (error: unknown) => onError(messageOf(error)),
          );
        }}
      />
    </div>
  );
}

export function LetterPanel({ visitId, clinic }: LetterPanelProps) {
  const { records } = useRepositories();
  const editContext = useEditContext();
  const { user } = useSession();
  const visit = useRecord('visit', visitId).data;
  const patient = useRecord('patient', visit?.fields.patientId).data;
  const letters = useRecordsByField('letter', 'visitId', visitId).data ?? [];
  const [openId, setOpenId] = useState<string | null>(null);
  const [copyToPatient, setCopyToPatient] = useState(false);
  const [message, setMessage] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const [previewUrl, setPreviewUrl] = useState<string | null>(null);
  const open = letters.find((l) => l.id === openId) ?? null;
  const letterhead = letterheadOf(clinic);

  useEffect(
    () => () => {
      if (previewUrl) URL.revokeObjectURL(previewUrl);
    },
    [previewUrl],
  );

  const run = (action: () => Promise<unknown>) => {
    setMessage(null);
    setBusy(true);
    action()
      .catch((error: unknown) => setMessage(messageOf(error)))
      .finally(() => setBusy(false));
  };

  const preview = (letterId: string) =>
    run(async () => {
      const bytes = await letterPdfOnTablet(records, letterId, {
        clinic,
        clinician: { name: user?.name ?? 'Clinician', role: 'Orthoptist' },
        today: today(),
      });
      setPreviewUrl(
        URL.createObjectURL(new Blob([bytes as BlobPart], { type: 'application/pdf' })),
      );
    });

  if (!visit) return null;
  const referrer = patient?.fields.referrer ?? null;
  const sendBlocked =
    open?.fields.deliveryState === 'queued' || open?.fields.deliveryState === 'sent';
  return (
    <section className="flc-panel" aria-labelledby="letters-title" data-testid="letter-panel">
      <header>
        <h2 id="letters-title">Letters</h2>
      </header>
      <p className="fl-muted">{CLINICAL_CAUTION}</p>
      <p className="fl-muted">
        Letterhead: {[letterhead.clinicName, ...letterhead.addressLines].join(' · ')}
      </p>
      <div className="flc-actions">
        <button
          type="button"
          className="flc-button flc-button--primary"
          disabled={busy}
          onClick={() =>
            run(async () =>
              setOpenId(await draftLetter(records, visit, 'referrer', referrer, editContext())),
            )
          }
        >
          New letter to the referrer
        </button>
        <button
          type="button"
          className="flc-button"
          disabled={busy}
          onClick={() =>
            run(async () =>
              setOpenId(await draftLetter(records, visit, 'handout', null, editContext())),
            )
          }
        >
          New exercise handout
        </button>
      </div>
      <p className="flc-message flc-message--error" role="alert">
        {message ?? ''}
      </p>
      {letters.length === 0 ? (
        <p className="fl-muted">No letters for this visit yet.</p>
      ) : (
        <ul className="flc-list" aria-label="Letters of this visit">
          {letters.map((letter) => (
            <li key={letter.id} className="flc-row">
              <span className="flc-row__main">
                <span className="flc-row__title">{titleOf(letter.fields)}</span>
                <span>{deliveryWords(letter.fields)}</span>
              </span>
              <button
                type="button"
                className="flc-button"
                aria-pressed={letter.id === openId}
                onClick={() => setOpenId(letter.id)}
              >
                Open {titleOf(letter.fields)}
              </button>
            </li>
          ))}
        </ul>
      )}
      {open && (
        <section aria-label="Open letter" key={open.id}>
          <h3>{titleOf(open.fields)}</h3>
          <p role="status">{deliveryWords(open.fields)}</p>
          {EDITABLE.map(({ field, label }) => (
            <LetterField
              key={field}
              letter={open}
              field={field}
              label={label}
              onError={setMessage}
            />
          ))}
          <div className="flc-actions">
            <button
              type="button"
              className="flc-button"
              disabled={busy}
              onClick={() => preview(open.id)}
            >
              Preview PDF
            </button>
            {open.fields.status === 'draft' ? (
              <button
                type="button"
                className="flc-button flc-button--primary"
                disabled={busy}
                onClick={() => run(() => finaliseLetter(records, open.id, editContext()))}
              >
                Finalise
              </button>
            ) : (
              <>
                {/* A handout goes to the patient anyway; a copy only means something on a letter. */}
                {open.fields.kind === 'referrer' ? (
                  <label className="flc-choice">
                    <input
                      type="checkbox"
                      checked={copyToPatient}
                      disabled={sendBlocked}
                      onChange={(event) => setCopyToPatient(event.target.checked)}
                    />{' '}
                    Copy to the patient
                  </label>
                ) : null}
                <button
                  type="button"
                  className="flc-button flc-button--primary"
                  disabled={busy || sendBlocked}
                  onClick={() =>
                    run(() =>
                      requestSend(
                        records,
                        open.id,
                        { copyToPatient: open.fields.kind === 'referrer' && copyToPatient },
                        editContext(),
                      ),
                    )
                  }
                >
                  {open.fields.kind === 'handout'
                    ? 'E-mail to the patient'
                    : 'E-mail to the referrer'}
                </button>
              </>
            )}
          </div>
          {open.fields.status === 'final' && (
            <p>This letter is final and can no longer be changed; write a new letter instead.</p>
          )}
        </section>
      )}
      <IonModal isOpen={previewUrl !== null} onDidDismiss={() => setPreviewUrl(null)}>
        {previewUrl && (
          <iframe
            title="Letter preview"
            src={previewUrl}
            style={{ width: '100%', height: '100%', border: 0 }}
          />
        )}
        <button type="button" className="flc-button" onClick={() => setPreviewUrl(null)}>
          Close preview
        </button>
      </IonModal>
    </section>
  );
}
