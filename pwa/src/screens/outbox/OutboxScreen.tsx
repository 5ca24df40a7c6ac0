// The Outbox: edits saved on this tablet that have not reached the clinic server yet, and the
// ones the server refused, with its reason, for their author to fix (send again with corrected
// values) or discard (after confirming, with undo).
import { IonContent, IonHeader, IonPage, IonSpinner, IonTitle, IonToolbar } from '@ionic/react';
import {
  collectionLabel,
  fieldMeta,
  isSectionCollection,
  type CollectionName,
  type FieldMeta,
} from '@fuselight/shared';
import { useState } from 'react';
import { useSession } from '../../auth/session-context';
import { useTabletPolicy } from '../../auth/SessionProvider';
import { SyncIndicator } from '../../components/SyncIndicator';
import {
  RecordValidationError,
  useEditContext,
  useOutboxEntries,
  useRepositories,
  type DiscardReceipt,
  type OutboxEntry,
} from '../../data';
import {
  describeWait,
  describeWarningHours,
  unsyncedTooLong,
  waitedMs,
} from '../../storage/unsynced-age';
import { useNow } from '../../storage/useStorageWarnings';

function recordLabel(collection: CollectionName): string {
  const label = collectionLabel(collection);
  return isSectionCollection(collection) ? `Section: ${label}` : label;
}

function labelOf(collection: CollectionName, field: string): string {
  if (field === 'deleted') return 'Deleted';
  return (fieldMeta[collection] as Record<string, FieldMeta>)[field]?.label ?? field;
}

function valueWords(value: unknown): string {
  if (value === null || value === undefined) return 'cleared';
  if (typeof value === 'boolean') return value ? 'yes' : 'no';
  if (typeof value === 'string') return value.length > 60 ? `${value.slice(0, 57)}…` : value;
  return JSON.stringify(value);
}

function fieldSummary(entry: OutboxEntry): string {
  const parts = Object.entries(entry.fields).map(
    ([field, value]) => `${labelOf(entry.collection, field)}: ${valueWords(value)}`,
  );
  if (entry.deleted === true) parts.unshift('Deleted');
  if (entry.deleted === false) parts.unshift('Restored');
  return parts.join(' · ') || 'No field changes';
}

function savedAt(entry: OutboxEntry): string {
  return new Date(entry.updatedAt).toLocaleString(undefined, {
    day: 'numeric',
    month: 'short',
    hour: '2-digit',
    minute: '2-digit',
  });
}

/** Text fields are corrected as text, others as JSON (numbers, lists, objects). */
function editableText(value: unknown): string {
  return typeof value === 'string' ? value : JSON.stringify(value ?? null);
}

function parseEdited(original: unknown, text: string): unknown {
  if (typeof original === 'string') return text;
  try {
    return JSON.parse(text) as unknown;
  } catch {
    return text;
  }
}

function FixForm(props: { entry: OutboxEntry; onDone: () => void; onCancel: () => void }) {
  const { entry } = props;
  const { outbox } = useRepositories();
  const editContext = useEditContext();
  const [values, setValues] = useState<Record<string, string>>(() =>
    Object.fromEntries(
      Object.entries(entry.fields).map(([field, value]) => [field, editableText(value)]),
    ),
  );
  const [errors, setErrors] = useState<Record<string, string>>({});
  const [problem, setProblem] = useState<string | null>(null);
  const [saving, setSaving] = useState(false);

  const submit = async () => {
    setSaving(true);
    setProblem(null);
    const corrections = Object.fromEntries(
      Object.entries(values).map(([field, text]) => [
        field,
        parseEdited(entry.fields[field], text),
      ]),
    );
    try {
      await outbox.resubmit(entry.changeId, corrections, editContext());
      props.onDone();
    } catch (error) {
      if (error instanceof RecordValidationError) {
        setErrors(
          Object.fromEntries(
            error.errors.map((fieldError) => [
              fieldError.field.split('.')[0] ?? '',
              fieldError.message,
            ]),
          ),
        );
        setProblem('Some values still need correcting');
      } else {
        setProblem(error instanceof Error ? error.message : String(error));
      }
    } finally {
      setSaving(false);
    }
  };

  return (
    <form
      aria-label={`Fix the refused edit of ${recordLabel(entry.collection)}`}
      onSubmit={(event) => {
        event.preventDefault();
        void submit();
      }}
      style={{ display: 'grid', gap: 12, marginTop: 12 }}
    >
      {Object.keys(values).map((field) => {
        const inputId = `fix-${entry.changeId}-${field}`;
        const errorId = `${inputId}-error`;
        return (
          <div key={field} style={{ display: 'grid', gap: 4 }}>
            <label htmlFor={inputId}>{labelOf(entry.collection, field)}</label>
            <input
              id={inputId}
              value={values[field] ?? ''}
              aria-invalid={errors[field] ? true : undefined}
              aria-describedby={errors[field] ? errorId : undefined}
              onChange={(event) => setValues({ ...values, [field]: event.target.value })}
              style={{ minHeight: 48, fontSize: '1rem', padding: '0 12px' }}
            />
            {errors[field] ? (
              <span id={errorId} role="alert" style={{ color: 'var(--ion-color-danger, #b00020)' }}>
                {errors[field]}
              </span>
            ) : null}
          </div>
        );
      })}
      {problem ? <p role="alert">{problem}</p> : null}
      <div style={{ display: 'flex', gap: 12, flexWrap: 'wrap' }}>
        <button
          className="fl-button"
          type="submit"
          disabled={saving}
          style={{
            minHeight: 48,
            minWidth: 48,
            padding: '0 16px',
            fontSize: '1rem',
            borderRadius: 8,
          }}
        >
          {saving ? 'Sending again…' : 'Save and send again'}
        </button>
        <button
          className="fl-button"
          type="button"
          onClick={props.onCancel}
          style={{
            minHeight: 48,
            minWidth: 48,
            padding: '0 16px',
            fontSize: '1rem',
            borderRadius: 8,
          }}
        >
          Cancel
        </button>
      </div>
    </form>
  );
}

function EntryItem(props: {
  entry: OutboxEntry;
  isAuthor: boolean;
  onDiscard: (entry: OutboxEntry) => void;
}) {
  const { entry, isAuthor } = props;
  const [fixing, setFixing] = useState(false);
  const [confirming, setConfirming] = useState(false);
  const rejected = entry.state === 'rejected';
  return (
    <li
      style={{
        listStyle: 'none',
        padding: 16,
        border: '1px solid var(--fl-border)',
        borderRadius: 8,
        marginBottom: 12,
        borderLeft: rejected ? '6px solid var(--ion-color-danger, #b00020)' : undefined,
      }}
    >
      <h3 style={{ margin: '0 0 4px' }}>{recordLabel(entry.collection)}</h3>
      <p style={{ margin: '0 0 4px' }}>{fieldSummary(entry)}</p>
      <p className="fl-muted" style={{ margin: 0 }}>
        Saved {savedAt(entry)}
        {isAuthor ? ' by you' : ''}
        {entry.attempts > 0 && !rejected ? ` · sent ${entry.attempts}×, waiting for an answer` : ''}
      </p>
      {rejected ? (
        <>
          <p role="note" style={{ color: 'var(--ion-color-danger, #b00020)', margin: '8px 0' }}>
            <strong>The clinic server refused this edit:</strong> {entry.error}
          </p>
          {isAuthor ? (
            fixing ? (
              <FixForm
                entry={entry}
                onDone={() => setFixing(false)}
                onCancel={() => setFixing(false)}
              />
            ) : confirming ? (
              <div
                role="group"
                aria-label="Confirm discarding this edit"
                style={{ display: 'grid', gap: 8 }}
              >
                <p style={{ margin: 0 }}>
                  Discard this edit? The values entered are removed from this tablet and the record
                  goes back to what the clinic server holds. You can undo this straight after.
                </p>
                <div style={{ display: 'flex', gap: 12, flexWrap: 'wrap' }}>
                  <button
                    className="fl-button"
                    type="button"
                    onClick={() => setConfirming(false)}
                    style={{ minHeight: 48 }}
                  >
                    Keep it
                  </button>
                  <button
                    className="fl-button"
                    type="button"
                    onClick={() => {
                      setConfirming(false);
                      props.onDiscard(entry);
                    }}
                    style={{ minHeight: 48 }}
                  >
                    Yes, discard
                  </button>
                </div>
              </div>
            ) : (
              <div style={{ display: 'flex', gap: 12, flexWrap: 'wrap' }}>
                <button
                  className="fl-button"
                  type="button"
                  onClick={() => setFixing(true)}
                  style={{ minHeight: 48 }}
                >
                  Fix
                </button>
                <button
                  className="fl-button"
                  type="button"
                  onClick={() => setConfirming(true)}
                  style={{ minHeight: 48 }}
                >
                  Discard
                </button>
              </div>
            )
          ) : (
            <p className="fl-muted">Only the person who made this edit can fix or discard it.</p>
          )}
        </>
      ) : null}
    </li>
  );
}

/**
 * How long the oldest entry has waited, and whether that is past the clinic's setting: edits
 * that wait exist only on this tablet, and a browser may clear its storage.
 */
export function OldestEntryWait(props: {
  oldestCreatedAt: number;
  nowMs: number;
  warningHours: number;
}) {
  const waited = describeWait(waitedMs(props.oldestCreatedAt, props.nowMs));
  const tooLong = unsyncedTooLong(props.oldestCreatedAt, props.nowMs, props.warningHours);
  return (
    <p className={tooLong ? undefined : 'fl-muted'} data-testid="outbox-oldest">
      {tooLong
        ? `The oldest entry has waited ${waited}, longer than the ${describeWarningHours(props.warningHours)} the clinic allows: sync as soon as the tablet can reach the clinic server.`
        : `The oldest entry has waited ${waited}.`}
    </p>
  );
}

export default function OutboxScreen() {
  const { user } = useSession();
  const { outbox } = useRepositories();
  const entries = useOutboxEntries();
  const policy = useTabletPolicy();
  const nowMs = useNow();
  const [receipt, setReceipt] = useState<DiscardReceipt | null>(null);
  const [actionError, setActionError] = useState<string | null>(null);

  const discard = async (entry: OutboxEntry) => {
    setActionError(null);
    try {
      setReceipt(await outbox.discard(entry.changeId));
    } catch (error) {
      setActionError(error instanceof Error ? error.message : String(error));
    }
  };
  const undo = async () => {
    if (!receipt) return;
    const taken = receipt;
    setReceipt(null);
    try {
      await outbox.undoDiscard(taken);
    } catch (error) {
      setActionError(error instanceof Error ? error.message : String(error));
    }
  };

  const all = entries.data ?? [];
  const rejected = all.filter((entry) => entry.state === 'rejected');
  const pending = all.filter((entry) => entry.state === 'pending');
  const oldestCreatedAt = all.length > 0 ? Math.min(...all.map((entry) => entry.createdAt)) : null;

  return (
    <IonPage>
      <IonHeader>
        <IonToolbar>
          <IonTitle>Outbox</IonTitle>
        </IonToolbar>
      </IonHeader>
      <IonContent className="ion-padding">
        <SyncIndicator />
        {actionError ? <p role="alert">{actionError}</p> : null}
        {receipt ? (
          <div
            role="status"
            style={{
              display: 'flex',
              gap: 12,
              alignItems: 'center',
              flexWrap: 'wrap',
              margin: '12px 0',
            }}
          >
            <span>Edit discarded.</span>
            <button
              className="fl-button"
              type="button"
              onClick={() => void undo()}
              style={{ minHeight: 48 }}
            >
              Undo
            </button>
          </div>
        ) : null}
        {entries.isPending ? (
          <div role="status" style={{ display: 'flex', gap: 8, alignItems: 'center' }}>
            <IonSpinner name="crescent" aria-hidden="true" /> Loading the Outbox…
          </div>
        ) : entries.isError ? (
          <div role="alert">
            <p>
              The Outbox could not be read on this tablet: {entries.error.message}. Your edits are
              not lost; try again.
            </p>
            <button
              className="fl-button"
              type="button"
              onClick={() => void entries.refetch()}
              style={{ minHeight: 48 }}
            >
              Try again
            </button>
          </div>
        ) : all.length === 0 ? (
          <p>Nothing is waiting: every edit saved on this tablet has reached the clinic server.</p>
        ) : (
          <>
            {oldestCreatedAt !== null ? (
              <OldestEntryWait
                oldestCreatedAt={oldestCreatedAt}
                nowMs={nowMs}
                warningHours={policy.unsyncedWarningHours}
              />
            ) : null}
            {rejected.length > 0 ? (
              <section aria-labelledby="outbox-refused">
                <h2 id="outbox-refused">Refused by the server ({rejected.length})</h2>
                <ul style={{ padding: 0 }}>
                  {rejected.map((entry) => (
                    <EntryItem
                      key={entry.changeId}
                      entry={entry}
                      isAuthor={user?.id === entry.authorId}
                      onDiscard={(entry) => void discard(entry)}
                    />
                  ))}
                </ul>
              </section>
            ) : null}
            <section aria-labelledby="outbox-waiting">
              <h2 id="outbox-waiting">Waiting to be sent ({pending.length})</h2>
              {pending.length === 0 ? (
                <p>Nothing else is waiting.</p>
              ) : (
                <ul style={{ padding: 0 }}>
                  {pending.map((entry) => (
                    <EntryItem
                      key={entry.changeId}
                      entry={entry}
                      isAuthor={user?.id === entry.authorId}
                      onDiscard={(entry) => void discard(entry)}
                    />
                  ))}
                </ul>
              )}
            </section>
          </>
        )}
      </IonContent>
    </IonPage>
  );
}
