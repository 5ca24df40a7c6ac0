// The Attachments panel of a Visit: take a photo with the tablet camera or choose a file (photos
// and PDFs), give it a caption, see thumbnails, and open one full screen. Files stay on the tablet
// until the server has them (uploaded by the sync runtime, on any screen; this panel only shows
// where each file is); files attached on another tablet are fetched only when opened.
// Plain controls in the Visit screen's own style (charting.css), like the Sections around it.
//
// Mount on the Visit screen: <AttachmentPanel visitId={visit.id} />
import { IonModal } from '@ionic/react';
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
import { requestSyncNow } from '../sync/sync-runtime';
import {
  getAttachmentDb,
  localFileBlob,
  transferStates,
  type AttachmentTransfer,
} from './attachment-db';
import { attachFile } from './attachment-intake';
import { attachmentBlob, subscribeTransfers } from './attachment-transfer';
import './AttachmentPanel.css';

export interface AttachmentPanelProps {
  visitId: string;
  /** The server's limit (config attachmentMaxBytes) when known. */
  maxBytes?: number;
}

/** Where a file is, in words. */
function whereWords(transfer: AttachmentTransfer | undefined): string {
  if (!transfer) return 'On another tablet or the server; opened on demand';
  switch (transfer.state) {
    case 'waiting':
      return transfer.lastError
        ? `Kept on this tablet until uploaded (${transfer.lastError})`
        : 'Kept on this tablet until uploaded';
    case 'uploaded':
      return 'On the server';
    case 'cached':
      return 'Fetched from the server';
  }
}

/** A refusal from the intake reads as a sentence, without the field name it carries for logs. */
function refusalWords(error: unknown): string {
  const text = error instanceof Error ? error.message : String(error);
  return `Not attached: ${text.replace(/^(file|caption): /, '')}`;
}

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
  const caption = attachment.fields.caption ?? null;
  useEffect(() => {
    let made: string | null = null;
    let gone = false;
    void localFileBlob(getAttachmentDb(), attachment.id).then((blob) => {
      if (gone || !blob || !attachment.fields.mimeType.startsWith('image/')) return;
      made = URL.createObjectURL(blob);
      setUrl(made);
    });
    return () => {
      gone = true;
      if (made) URL.revokeObjectURL(made);
    };
  }, [attachment.id, attachment.fields.mimeType, local]);
  return (
    <button
      type="button"
      className="attachment-thumb"
      onClick={onOpen}
      aria-label={`Open ${caption ?? 'attachment'}`}
    >
      {url ? (
        <img src={url} alt={caption ?? 'Attachment'} width={96} height={96} />
      ) : (
        <span className="attachment-thumb__stand-in">
          {attachment.fields.mimeType === 'application/pdf' ? 'PDF' : 'Tap to load'}
        </span>
      )}
      <small>{caption ?? 'No caption'}</small>
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
  const [message, setMessage] = useState<{ text: string; refused: boolean } | null>(null);
  const [busy, setBusy] = useState(false);
  const [states, setStates] = useState<Map<string, AttachmentTransfer>>(new Map());
  const [viewer, setViewer] = useState<{ url: string; mimeType: string; caption: string } | null>(
    null,
  );
  const camera = useRef<HTMLInputElement>(null);
  const chooser = useRef<HTMLInputElement>(null);
  const ids = attachments.map((a) => a.id).join(',');

  // Merged, not replaced: a refresh begun before a new file's record reached the list (its
  // closure holds the older ids) must not drop the new file's state again.
  const refreshStates = useCallback(
    async (also: readonly string[] = []) => {
      const rows = await transferStates(getAttachmentDb(), [
        ...(ids ? ids.split(',') : []),
        ...also,
      ]);
      setStates((shown) => new Map([...shown, ...rows]));
    },
    [ids],
  );

  useEffect(() => {
    // Uploads run on the sync schedule (sync-runtime.ts); the panel reads where each file is
    // when it opens and whenever an upload round or a fetch changed something.
    const refresh = () => void refreshStates().catch(() => undefined);
    const first = setTimeout(refresh, 0);
    const unsubscribe = subscribeTransfers(refresh);
    return () => {
      clearTimeout(first);
      unsubscribe();
    };
  }, [refreshStates]);

  useEffect(
    () => () => {
      if (viewer) URL.revokeObjectURL(viewer.url);
    },
    [viewer],
  );

  const take = async (input: HTMLInputElement) => {
    const file = input.files?.[0];
    // Cleared at once, so choosing the same file again (after a refusal) is seen as a choice.
    input.value = '';
    if (!file || !visit) return;
    setMessage(null);
    setBusy(true);
    try {
      const attachmentId = await attachFile(
        records,
        getAttachmentDb(),
        { file, caption, visit, maxBytes },
        editContext(),
      );
      setCaption('');
      setMessage({
        text: `Attached ${file.name || 'the file'}; kept on this tablet until uploaded.`,
        refused: false,
      });
      await refreshStates([attachmentId]);
      // Sends the attachment record now; its file is uploaded right after, by the sync.
      void requestSyncNow().catch(() => undefined);
    } catch (error) {
      setMessage({ text: refusalWords(error), refused: true });
    } finally {
      setBusy(false);
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
      setMessage({
        text: `Could not open the file: ${error instanceof Error ? error.message : String(error)}`,
        refused: true,
      });
    }
  };

  if (!visit) return null;
  return (
    <section
      className="flc-panel"
      aria-labelledby="attachments-title"
      data-testid="attachment-panel"
    >
      <header>
        <h2 id="attachments-title">Photos and files</h2>
      </header>
      <div className="flc-field">
        <label htmlFor={`attachment-caption-${visitId}`}>Caption</label>
        <input
          id={`attachment-caption-${visitId}`}
          className="flc-input"
          type="text"
          maxLength={500}
          value={caption}
          onChange={(event) => setCaption(event.target.value)}
        />
      </div>
      <input
        ref={camera}
        type="file"
        accept="image/*"
        capture="environment"
        hidden
        aria-label="Photo from the camera"
        onChange={(event) => void take(event.target)}
      />
      <input
        ref={chooser}
        type="file"
        accept="image/jpeg,image/png,image/webp,image/heic,application/pdf"
        hidden
        aria-label="File to attach"
        onChange={(event) => void take(event.target)}
      />
      <div className="flc-actions">
        <button
          type="button"
          className="flc-button flc-button--primary"
          disabled={busy}
          onClick={() => camera.current?.click()}
        >
          Take a photo
        </button>
        <button
          type="button"
          className="flc-button"
          disabled={busy}
          onClick={() => chooser.current?.click()}
        >
          Choose a file
        </button>
      </div>
      <p className="flc-message" role="status">
        {message && !message.refused ? message.text : ''}
      </p>
      <p className="flc-message flc-message--error" role="alert">
        {message?.refused ? message.text : ''}
      </p>
      {attachments.length === 0 ? (
        <p className="fl-muted">No photos or files on this visit yet.</p>
      ) : (
        <ul className="attachment-grid" aria-label="Photos and files of this visit">
          {attachments.map((attachment) => (
            <li key={attachment.id}>
              <Thumbnail
                attachment={attachment}
                local={states.has(attachment.id)}
                onOpen={() => void openViewer(attachment)}
              />
              <p className="fl-muted">
                {attachment.fields.uploadedAt
                  ? 'On the server'
                  : whereWords(states.get(attachment.id))}
              </p>
            </li>
          ))}
        </ul>
      )}
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
        <button type="button" className="flc-button" onClick={() => setViewer(null)}>
          Close
        </button>
      </IonModal>
    </section>
  );
}
