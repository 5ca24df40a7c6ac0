// The Letters panel of a Visit: draft a letter to the referrer or an exercise handout, edit its
// paragraphs, preview the PDF (drawn on the tablet, offline), finalise it (after which it is read
// only), and ask for it to be e-mailed; the delivery state comes back with sync.
//
// Mount on the Visit screen: <LetterPanel visitId={visit.id} clinic={{ name, address }} />
import {
  IonButton,
  IonCard,
  IonCardContent,
  IonCardHeader,
  IonCardTitle,
  IonCheckbox,
  IonItem,
  IonLabel,
  IonList,
  IonModal,
  IonNote,
  IonTextarea,
} from '@ionic/react';
import type { ClinicDetails, RecordFields } from '@fuselight/shared';
import { CLINICAL_CAUTION } from '@fuselight/shared';
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

const EDITABLE: {
  field: 'subject' | 'opening' | 'findingsText' | 'planText' | 'closing';
  label: string;
}[] = [
  { field: 'subject', label: 'Subject' },
  { field: 'opening', label: 'Opening' },
  { field: 'findingsText', label: 'Note under the findings' },
  { field: 'planText', label: 'Note under the plan' },
  { field: 'closing', label: 'Closing' },
];

function today(): string {
  return new Date().toISOString().slice(0, 10);
}

function LetterEditor({
  letter,
  onError,
}: {
  letter: LocalRecord<'letter'>;
  onError: (message: string) => void;
}) {
  const { records } = useRepositories();
  const editContext = useEditContext();
  const final = letter.fields.status === 'final';
  return (
    <IonList>
      {EDITABLE.map(({ field, label }) => (
        <IonItem key={field}>
          <IonTextarea
            label={label}
            labelPlacement="stacked"
            autoGrow
            readonly={final}
            value={(letter.fields as Partial<RecordFields<'letter'>>)[field] ?? ''}
            onIonChange={(event) => {
              const value = String(event.detail.value ?? '').trim();
              editLetter(records, letter.id, { [field]: value || null }, editContext()).catch(
                (error: unknown) => onError(error instanceof Error ? error.message : String(error)),
              );
            }}
          />
        </IonItem>
      ))}
    </IonList>
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
  const [previewUrl, setPreviewUrl] = useState<string | null>(null);
  const open = letters.find((l) => l.id === openId) ?? null;

  useEffect(
    () => () => {
      if (previewUrl) URL.revokeObjectURL(previewUrl);
    },
    [previewUrl],
  );

  const run = (action: () => Promise<unknown>) => {
    setMessage(null);
    action().catch((error: unknown) =>
      setMessage(error instanceof Error ? error.message : String(error)),
    );
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
  return (
    <IonCard className="letters-panel" data-testid="letter-panel">
      <IonCardHeader>
        <IonCardTitle>Letters</IonCardTitle>
      </IonCardHeader>
      <IonCardContent>
        <IonNote>{CLINICAL_CAUTION}</IonNote>
        <div className="letters-panel__actions">
          <IonButton
            onClick={() =>
              run(async () =>
                setOpenId(await draftLetter(records, visit, 'referrer', referrer, editContext())),
              )
            }
          >
            New letter to the referrer
          </IonButton>
          <IonButton
            fill="outline"
            onClick={() =>
              run(async () =>
                setOpenId(await draftLetter(records, visit, 'handout', null, editContext())),
              )
            }
          >
            New exercise handout
          </IonButton>
        </div>
        {message && (
          <IonNote color="danger" role="alert">
            {message}
          </IonNote>
        )}
        <IonList>
          {letters.map((letter) => (
            <IonItem key={letter.id} button detail onClick={() => setOpenId(letter.id)}>
              <IonLabel>
                <h3>
                  {letter.fields.subject ??
                    (letter.fields.kind === 'handout'
                      ? 'Exercise handout'
                      : `Letter to ${letter.fields.recipientName ?? 'the referrer'}`)}
                </h3>
                <p>{deliveryWords(letter.fields)}</p>
              </IonLabel>
            </IonItem>
          ))}
        </IonList>
        {open && (
          <section aria-label="Open letter">
            <LetterEditor letter={open} onError={setMessage} />
            <div className="letters-panel__actions">
              <IonButton fill="outline" onClick={() => preview(open.id)}>
                Preview PDF
              </IonButton>
              {open.fields.status === 'draft' ? (
                <IonButton
                  onClick={() => run(() => finaliseLetter(records, open.id, editContext()))}
                >
                  Finalise
                </IonButton>
              ) : (
                <>
                  <IonCheckbox
                    checked={copyToPatient}
                    onIonChange={(e) => setCopyToPatient(e.detail.checked)}
                  >
                    Copy to the patient
                  </IonCheckbox>
                  <IonButton
                    disabled={
                      open.fields.deliveryState === 'queued' || open.fields.deliveryState === 'sent'
                    }
                    onClick={() =>
                      run(() => requestSend(records, open.id, { copyToPatient }, editContext()))
                    }
                  >
                    {open.fields.kind === 'handout'
                      ? 'E-mail to the patient'
                      : 'E-mail to the referrer'}
                  </IonButton>
                </>
              )}
            </div>
            {open.fields.status === 'final' && (
              <IonNote>This letter is final and can no longer be changed.</IonNote>
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
          <IonButton onClick={() => setPreviewUrl(null)}>Close preview</IonButton>
        </IonModal>
      </IonCardContent>
    </IonCard>
  );
}
