// The Attachments panel of a Visit: take a photo with the tablet camera or choose a file (photos
// and PDFs), give it a caption, see thumbnails, and open one full screen. Files stay on the tablet
// until the server has them; files attached on another tablet are fetched only when opened.
//
// Mount on the Visit screen: <AttachmentPanel visitId={visit.id} />
import {
  IonButton,
  IonCard,
  IonCardContent,
  IonCardHeader,
  IonCardTitle,
  IonInput,
  IonItem,
  IonModal,
  IonNote,
} from '@ionic/react';
import { MAX_ATTACHMENT_BYTES } from '@fuselight/shared';
import { useCallback, useEffect, useRef, useState } from 'react';
import { useSessionStore } from '../auth/SessionProvider';
import { useSession } from '../auth/session-context';
import {
  useEditContext,
  useRecord,
  useRecordsByField,
  useRepositories,
  type LocalRecord,
} from '../data';
import { blobOf, getAttachmentDb } from './attachment-db';
import { attachFile } from './attachment-intake';
import { attachmentBlob, transferStates, uploadWaitingFiles } from './attachment-transfer';

export interface AttachmentPanelProps {
  visitId: string;
  /** The server's limit (config attachmentMaxBytes) when known. */
  maxBytes?: number;
}

const UPLOAD_EVERY_MS = 30_000;

function Thumbnail({
  attachment,
  onOpen,
  local,
}: {
  attachment: LocalRecord<'attachment'>;
  onOpen: () => void;
  local: boolean;
}) {
  const [url, setUrl] = useState<string | null>(null);
  useEffect(() => {
    let made: string | null = null;
    void getAttachmentDb()
      .files.get(attachment.id)
      .then((file) => {
        if (file && attachment.fields.mimeType.startsWith('image/')) {
          made = URL.createObjectURL(blobOf(file));
          setUrl(made);
        }
      });
    return () => {
      if (made) URL.revokeObjectURL(made);
    };
  }, [attachment.id, attachment.fields.mimeType, local]);
  return (
    <button
      type="button"
      className="attachment-thumb"
      onClick={onOpen}
      aria-label={`Open ${attachment.fields.caption ?? 'attachment'}`}
    >
      {url ? (
        <img
          src={url}
          alt={attachment.fields.caption ?? 'Attachment'}
          width={96}
          height={96}
          style={{ objectFit: 'cover' }}
        />
      ) : (
        <span>{attachment.fields.mimeType === 'application/pdf' ? 'PDF' : 'Tap to load'}</span>
      )}
      <small>{attachment.fields.caption ?? ''}</small>
    </button>
  );
}

export function AttachmentPanel({
  visitId,
  maxBytes = MAX_ATTACHMENT_BYTES,
}: AttachmentPanelProps) {
  const { records } = useRepositories();
  const editContext = useEditContext();
  const store = useSessionStore();
  const { user } = useSession();
  const visit = useRecord('visit', visitId).data;
  const attachments = useRecordsByField('attachment', 'visitId', visitId).data ?? [];
  const [caption, setCaption] = useState('');
  const [message, setMessage] = useState<string | null>(null);
  const [states, setStates] = useState<Map<string, string>>(new Map());
  const [viewer, setViewer] = useState<{ url: string; mimeType: string; caption: string } | null>(
    null,
  );
  const camera = useRef<HTMLInputElement>(null);
  const chooser = useRef<HTMLInputElement>(null);
  const ids = attachments.map((a) => a.id).join(',');

  const refreshStates = useCallback(async () => {
    const rows = await transferStates(getAttachmentDb(), ids ? ids.split(',') : []);
    setStates(
      new Map(
        [...rows].map(([id, row]) => [
          id,
          row.state === 'waiting' && row.lastError ? `waiting: ${row.lastError}` : row.state,
        ]),
      ),
    );
  }, [ids]);

  const upload = useCallback(async () => {
    await uploadWaitingFiles(getAttachmentDb(), {
      baseUrl: '',
      tokenFor: (authorId) => store.tokenFor(authorId),
    });
    await refreshStates();
  }, [store, refreshStates]);

  useEffect(() => {
    // Read upload states (and try any waiting file) once the panel is on screen, then every 30 s.
    const first = setTimeout(() => void upload(), 0);
    const timer = setInterval(() => void upload(), UPLOAD_EVERY_MS);
    const online = () => void upload();
    window.addEventListener('online', online);
    return () => {
      clearTimeout(first);
      clearInterval(timer);
      window.removeEventListener('online', online);
    };
  }, [upload, refreshStates]);

  const take = async (file: File | undefined) => {
    if (!file || !visit) return;
    setMessage(null);
    try {
      await attachFile(
        records,
        getAttachmentDb(),
        { file, caption, visit, maxBytes },
        editContext(),
      );
      setCaption('');
      await refreshStates();
      void upload();
    } catch (error) {
      setMessage(error instanceof Error ? error.message : String(error));
    }
  };

  const openViewer = async (attachment: LocalRecord<'attachment'>) => {
    setMessage(null);
    try {
      const blob = await attachmentBlob(getAttachmentDb(), attachment, {
        baseUrl: '',
        tokenFor: (authorId) => store.tokenFor(authorId),
        authorId: user?.id ?? '',
      });
      setViewer({
        url: URL.createObjectURL(blob),
        mimeType: attachment.fields.mimeType,
        caption: attachment.fields.caption ?? '',
      });
      await refreshStates();
    } catch (error) {
      setMessage(error instanceof Error ? error.message : String(error));
    }
  };

  if (!visit) return null;
  return (
    <IonCard data-testid="attachment-panel">
      <IonCardHeader>
        <IonCardTitle>Photos and files</IonCardTitle>
      </IonCardHeader>
      <IonCardContent>
        <IonItem>
          <IonInput
            label="Caption"
            labelPlacement="stacked"
            maxlength={500}
            value={caption}
            onIonInput={(e) => setCaption(String(e.detail.value ?? ''))}
          />
        </IonItem>
        <input
          ref={camera}
          type="file"
          accept="image/*"
          capture="environment"
          hidden
          onChange={(e) => void take(e.target.files?.[0])}
        />
        <input
          ref={chooser}
          type="file"
          accept="image/jpeg,image/png,image/webp,image/heic,application/pdf"
          hidden
          onChange={(e) => void take(e.target.files?.[0])}
        />
        <IonButton onClick={() => camera.current?.click()}>Take a photo</IonButton>
        <IonButton fill="outline" onClick={() => chooser.current?.click()}>
          Choose a file
        </IonButton>
        {message && (
          <IonNote color="danger" role="alert">
            {message}
          </IonNote>
        )}
        <div className="attachment-grid">
          {attachments.map((attachment) => (
            <div key={attachment.id}>
              <Thumbnail
                attachment={attachment}
                local={states.has(attachment.id)}
                onOpen={() => void openViewer(attachment)}
              />
              <IonNote>
                {attachment.fields.uploadedAt
                  ? 'On the server'
                  : (states.get(attachment.id) ?? 'On another tablet')}
              </IonNote>
            </div>
          ))}
        </div>
        <IonModal isOpen={viewer !== null} onDidDismiss={() => setViewer(null)}>
          {viewer &&
            (viewer.mimeType === 'application/pdf' ? (
              <iframe
                title={viewer.caption || 'Attachment'}
                src={viewer.url}
                style={{ width: '100%', height: '100%', border: 0 }}
              />
            ) : (
              <img
                src={viewer.url}
                alt={viewer.caption || 'Attachment'}
                style={{ width: '100%', height: '100%', objectFit: 'contain', background: '#000' }}
              />
            ))}
          <IonButton onClick={() => setViewer(null)}>Close</IonButton>
        </IonModal>
      </IonCardContent>
    </IonCard>
  );
}
