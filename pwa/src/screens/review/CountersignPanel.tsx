// Visits waiting for a supervisor's countersignature: a summary of each (patient, clinician,
// Sections in the clinician's words, computed interpretations with the caution), and the two
// answers — Countersign, or Return to the author with a comment they will see on their tablet.
import {
  CLINICAL_CAUTION,
  SECTION_PLACEMENT_KEYS,
  isSectionCollection,
  collectionLabel,
} from '@fuselight/shared';
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { z } from 'zod';
import { InterpretationSummary } from '../../components/charting/InterpretationSummary';
import { ageOnDate, type VisitSectionValues } from '@fuselight/shared';
import { fieldLabel, formatFieldValue, formatInstant } from './field-format';
import { type CountersignItem } from './review-api';
import { useReviewApi } from './review-context';
import { queryKeys } from '../../data/query-keys';

const HIDDEN: ReadonlySet<string> = new Set([...SECTION_PLACEMENT_KEYS]);

export const returnCommentSchema = z
  .string()
  .trim()
  .min(1, { error: 'Comment: write what the clinician should look at again.' })
  .max(2000, { error: 'Comment: at most 2000 characters.' });

function sectionValues(item: CountersignItem): VisitSectionValues {
  const values: VisitSectionValues = {};
  for (const section of item.sections) {
    if (isSectionCollection(section.collection)) values[section.collection] = section.fields;
  }
  return values;
}

function VisitSummary({ item }: { item: CountersignItem }) {
  return (
    <div className="fl-review-summary">
      {item.sections.length === 0 ? <p>No Sections were charted in this visit.</p> : null}
      {item.sections.map((section) => {
        const entries = Object.entries(section.fields).filter(
          ([field, value]) =>
            !HIDDEN.has(field) && value !== null && !(Array.isArray(value) && value.length === 0),
        );
        return (
          <section key={section.id} aria-label={collectionLabel(section.collection)}>
            <h4>{collectionLabel(section.collection)}</h4>
            {entries.length === 0 ? (
              <p className="fl-muted">Nothing recorded.</p>
            ) : (
              <dl className="fl-review-context">
                {entries.map(([field, value]) => (
                  <div key={field} className="fl-review-context__row">
                    <dt>{fieldLabel(section.collection, field)}</dt>
                    <dd>
                      {formatFieldValue(section.collection, field, value, {
                        timeZone: item.timeZone,
                      })}
                    </dd>
                  </div>
                ))}
              </dl>
            )}
          </section>
        );
      })}
    </div>
  );
}

function CountersignCard({
  item,
  onHistory,
}: {
  item: CountersignItem;
  onHistory: (visitId: string) => void;
}) {
  const api = useReviewApi();
  const queryClient = useQueryClient();
  const [open, setOpen] = useState(false);
  const [returning, setReturning] = useState(false);
  const [comment, setComment] = useState('');
  const [commentError, setCommentError] = useState<string | null>(null);
  const done = async () => queryClient.invalidateQueries({ queryKey: queryKeys.review.all() });
  const countersign = useMutation({
    mutationFn: () => api.countersign(item.visitId),
    onSuccess: done,
  });
  const sendBack = useMutation({
    mutationFn: (text: string) => api.returnVisit(item.visitId, text),
    onSuccess: done,
  });
  const title = `${item.patient.name ?? 'Patient not on record'}, visit of ${item.date}`;
  const headingId = `countersign-${item.visitId}`;
  const failure = countersign.error ?? sendBack.error;
  return (
    <article className="fl-review-card" aria-labelledby={headingId}>
      <h3 id={headingId}>{title}</h3>
      <p>
        Signed by {item.signedBy?.name ?? item.clinician.name}
        {item.signedAt ? `, ${formatInstant(item.signedAt, item.timeZone)}` : ''}
        {item.siteName ? ` · ${item.siteName}` : ''}
        {item.reason ? ` · ${item.reason}` : ''}
      </p>
      {item.openDisputes > 0 ? (
        <p className="fl-review-banner" role="note">
          {item.openDisputes} open {item.openDisputes === 1 ? 'dispute' : 'disputes'} in this visit:
          resolve {item.openDisputes === 1 ? 'it' : 'them'} on the Disputes tab before
          countersigning.
        </p>
      ) : null}
      <button
        type="button"
        className="fl-touch fl-button fl-button--quiet"
        aria-expanded={open}
        onClick={() => setOpen((o) => !o)}
      >
        {open ? 'Hide summary' : 'Show summary and interpretation'}
      </button>
      {open ? (
        <>
          <VisitSummary item={item} />
          <InterpretationSummary
            sections={sectionValues(item)}
            ageYears={ageOnDate(item.patient.dateOfBirth, item.date)}
          />
        </>
      ) : null}
      {failure ? (
        <p className="fl-field-error" role="alert">
          {failure.message}
        </p>
      ) : null}
      {returning ? (
        <div className="fl-review-field">
          <label htmlFor={`return-${item.visitId}`} className="fl-review-field__label">
            Comment for {item.clinician.name} (required)
          </label>
          <textarea
            id={`return-${item.visitId}`}
            className="fl-input fl-review-note"
            rows={3}
            value={comment}
            aria-invalid={commentError ? true : undefined}
            aria-describedby={commentError ? `return-${item.visitId}-error` : undefined}
            onChange={(e) => setComment(e.target.value)}
          />
          {commentError ? (
            <p id={`return-${item.visitId}-error`} className="fl-field-error" role="alert">
              {commentError}
            </p>
          ) : null}
        </div>
      ) : null}
      <div className="fl-review-actions">
        {returning ? (
          <>
            <button
              type="button"
              className="fl-touch fl-button fl-button--primary"
              disabled={sendBack.isPending}
              onClick={() => {
                const parsed = returnCommentSchema.safeParse(comment);
                if (!parsed.success) {
                  setCommentError(parsed.error.issues[0]?.message ?? 'Comment is required.');
                  return;
                }
                setCommentError(null);
                sendBack.mutate(parsed.data);
              }}
            >
              {sendBack.isPending ? 'Returning…' : 'Return to author'}
            </button>
            <button
              type="button"
              className="fl-touch fl-button fl-button--quiet"
              onClick={() => setReturning(false)}
            >
              Cancel
            </button>
          </>
        ) : (
          <>
            <button
              type="button"
              className="fl-touch fl-button fl-button--primary"
              disabled={item.openDisputes > 0 || countersign.isPending}
              onClick={() => countersign.mutate()}
            >
              {countersign.isPending ? 'Countersigning…' : 'Countersign'}
            </button>
            <button type="button" className="fl-touch fl-button" onClick={() => setReturning(true)}>
              Return with a comment
            </button>
            <button
              type="button"
              className="fl-touch fl-button fl-button--quiet"
              onClick={() => onHistory(item.visitId)}
            >
              Visit history
            </button>
          </>
        )}
      </div>
    </article>
  );
}

export function CountersignPanel({ onHistory }: { onHistory: (visitId: string) => void }) {
  const api = useReviewApi();
  const queue = useQuery({
    queryKey: queryKeys.review.countersign(),
    queryFn: () => api.countersignQueue(),
  });
  return (
    <section className="fl-review-panel" aria-labelledby="countersign-title">
      <h2 id="countersign-title">Countersign</h2>
      <p className="fl-caution" role="note">
        {CLINICAL_CAUTION} Interpretations shown here support and do not replace your clinical
        judgement.
      </p>
      {queue.isPending ? (
        <p role="status">Loading visits to countersign…</p>
      ) : queue.isError ? (
        <div role="alert">
          <p>The visits to countersign could not be loaded: {queue.error.message}</p>
          <button type="button" className="fl-touch fl-button" onClick={() => void queue.refetch()}>
            Try again
          </button>
        </div>
      ) : queue.data.items.length === 0 ? (
        <p role="status">No Signed visits are waiting for your countersignature.</p>
      ) : (
        queue.data.items.map((item) => (
          <CountersignCard key={item.visitId} item={item} onHistory={onHistory} />
        ))
      )}
    </section>
  );
}
