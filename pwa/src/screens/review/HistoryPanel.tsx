// A record's history: every value each field has held, who entered it on which tablet and when
// (in the clinic's time zone), disputes and their resolutions, signatures and Addenda; with a
// CSV export of the same entries.
import { COLLECTIONS, collectionLabel } from '@fuselight/shared';
import { useQuery } from '@tanstack/react-query';
import { useState } from 'react';
import { fieldLabel, formatFieldValue, formatInstant } from './field-format';
import { type HistoryEntry, type HistoryKind } from './review-api';
import { useReviewApi } from './review-context';
import { queryKeys } from '../../data/query-keys';

const KIND_WORDS: Record<HistoryKind, string> = {
  value: 'Value entered',
  'dispute-opened': 'Dispute opened',
  'dispute-resolved': 'Dispute resolved',
  addendum: 'Addendum',
  signed: 'Signed',
  countersigned: 'Countersigned',
  returned: 'Returned to author',
};

export interface HistoryTarget {
  collection: string;
  recordId: string;
}

function fieldWords(collection: string, field: string | null): string {
  if (!field) return '—';
  if (field.includes('.')) {
    const [owner, name] = field.split('.', 2) as [string, string];
    return `${collectionLabel(owner)}: ${fieldLabel(owner, name)}`;
  }
  return fieldLabel(collection, field);
}

function valueWords(
  collection: string,
  entry: HistoryEntry,
  timeZone: string,
  which: 'value' | 'previousValue',
): string {
  if (!(which in entry) || entry[which] === undefined) return '';
  const [owner, name] = entry.field?.includes('.')
    ? (entry.field.split('.', 2) as [string, string])
    : [collection, entry.field ?? ''];
  return formatFieldValue(owner, name, entry[which], { timeZone });
}

export function HistoryPanel({
  target,
  onTarget,
}: {
  target: HistoryTarget | null;
  onTarget: (t: HistoryTarget) => void;
}) {
  const api = useReviewApi();
  const [collection, setCollection] = useState(target?.collection ?? 'visit');
  const [recordId, setRecordId] = useState(target?.recordId ?? '');
  const [csvError, setCsvError] = useState<string | null>(null);
  const history = useQuery({
    queryKey: queryKeys.review.history(target?.collection ?? '', target?.recordId ?? ''),
    queryFn: () => api.history(target!.collection, target!.recordId),
    enabled: target !== null,
  });

  const download = async () => {
    if (!target) return;
    setCsvError(null);
    try {
      const csv = await api.historyCsv(target.collection, target.recordId);
      const url = URL.createObjectURL(new Blob([csv], { type: 'text/csv' }));
      const link = document.createElement('a');
      link.href = url;
      link.download = `${target.collection}-${target.recordId}-history.csv`;
      link.click();
      setTimeout(() => URL.revokeObjectURL(url), 10_000);
    } catch (error) {
      setCsvError(error instanceof Error ? error.message : String(error));
    }
  };

  return (
    <section className="fl-review-panel" aria-labelledby="history-title">
      <h2 id="history-title">Record history</h2>
      <form
        className="fl-review-filters"
        onSubmit={(event) => {
          event.preventDefault();
          if (recordId.trim()) onTarget({ collection, recordId: recordId.trim() });
        }}
      >
        <label>
          Section
          <select
            className="fl-touch fl-input"
            value={collection}
            onChange={(e) => setCollection(e.target.value)}
          >
            {COLLECTIONS.map((c) => (
              <option key={c} value={c}>
                {collectionLabel(c)}
              </option>
            ))}
          </select>
        </label>
        <label>
          Record id
          <input
            className="fl-touch fl-input"
            value={recordId}
            onChange={(e) => setRecordId(e.target.value)}
          />
        </label>
        <button type="submit" className="fl-touch fl-button">
          Show history
        </button>
      </form>

      {target === null ? (
        <p>Open a record’s history from a dispute or a visit, or enter its id above.</p>
      ) : history.isPending ? (
        <p role="status">Loading the history…</p>
      ) : history.isError ? (
        <div role="alert">
          <p>The history could not be loaded: {history.error.message}</p>
          <button
            type="button"
            className="fl-touch fl-button"
            onClick={() => void history.refetch()}
          >
            Try again
          </button>
        </div>
      ) : (
        <>
          <p>
            {collectionLabel(history.data.collection)} record, version{' '}
            {history.data.current.version}
            {history.data.current.deleted ? ' (deleted)' : ''}. Times in {history.data.timeZone}.
          </p>
          <div className="fl-review-actions">
            <button type="button" className="fl-touch fl-button" onClick={() => void download()}>
              Export as CSV
            </button>
          </div>
          {csvError ? (
            <p className="fl-field-error" role="alert">
              {csvError}
            </p>
          ) : null}
          {history.data.entries.length === 0 ? (
            <p role="status">Nothing recorded on this record yet.</p>
          ) : (
            <table className="fl-review-table">
              <caption className="fl-visually-hidden">History of the record</caption>
              <thead>
                <tr>
                  <th scope="col">When</th>
                  <th scope="col">What</th>
                  <th scope="col">Field</th>
                  <th scope="col">Value</th>
                  <th scope="col">Who, on which tablet</th>
                  <th scope="col">Note</th>
                </tr>
              </thead>
              <tbody>
                {history.data.entries.map((entry, index) => (
                  <tr
                    key={`${entry.kind}-${entry.field}-${entry.version}-${index}`}
                    className={`fl-review-history--${entry.kind}`}
                  >
                    <td>{formatInstant(entry.at, history.data.timeZone)}</td>
                    <td>{KIND_WORDS[entry.kind]}</td>
                    <td>{fieldWords(history.data.collection, entry.field)}</td>
                    <td>
                      {entry.kind === 'addendum'
                        ? `${valueWords(history.data.collection, entry, history.data.timeZone, 'previousValue')} → ${valueWords(history.data.collection, entry, history.data.timeZone, 'value')}`
                        : valueWords(
                            history.data.collection,
                            entry,
                            history.data.timeZone,
                            'value',
                          )}
                    </td>
                    <td>
                      {entry.by ? entry.by.name : '—'}
                      {entry.device ? ` on ${entry.device.label}` : ''}
                    </td>
                    <td>{entry.note ?? ''}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          )}
        </>
      )}
    </section>
  );
}
