// One dispute side by side: every candidate value as the clinician saw it, who entered it, on
// which tablet and when (in the clinic's time zone), the provisional value marked, and the rest
// of the record for context. The supervisor chooses a candidate or enters a corrected value
// through the Visit form's controls, and must say why.
import { zodResolver } from '@hookform/resolvers/zod';
import {
  SECTION_PLACEMENT_KEYS,
  resolveConflictRequestSchema,
  collectionLabel,
} from '@fuselight/shared';
import { useState } from 'react';
import { Controller, useForm, useWatch } from 'react-hook-form';
import { z } from 'zod';
import {
  CorrectedValueField,
  canEnterCorrection,
  checkCorrectedValue,
} from './CorrectedValueField';
import {
  fieldLabel,
  formatAge,
  formatFieldValue,
  formatInstant,
  formatStampTime,
} from './field-format';
import type { ContextRecord, DisputeDetail } from './review-api';

const CORRECTED = 'corrected';
const HIDDEN_FIELDS: ReadonlySet<string> = new Set([...SECTION_PLACEMENT_KEYS]);

export interface DisputeViewProps {
  dispute: DisputeDetail;
  now: Date;
  onResolve: (request: { value: unknown; note: string }) => Promise<void>;
  onOpenHistory?: (collection: string, recordId: string) => void;
  onClose?: () => void;
}

interface ResolveForm {
  choice: string;
  corrected: unknown;
  note: string;
}

function resolveFormSchema(dispute: DisputeDetail) {
  return z
    .object({
      choice: z.string().min(1, { error: 'Choose one of the values, or enter a corrected value.' }),
      corrected: z.unknown(),
      note: resolveConflictRequestSchema.shape.note,
    })
    .superRefine((form, ctx) => {
      if (form.choice !== CORRECTED) return;
      const check = checkCorrectedValue(dispute.collection, dispute.field, form.corrected);
      if (!check.ok) ctx.addIssue({ code: 'custom', path: ['corrected'], message: check.message });
    });
}

function ContextFields({
  record,
  highlight,
  timeZone,
}: {
  record: ContextRecord;
  highlight?: string;
  timeZone: string;
}) {
  const entries = Object.entries(record.fields).filter(([field]) => !HIDDEN_FIELDS.has(field));
  if (entries.length === 0) return <p className="fl-muted">No other fields recorded.</p>;
  return (
    <dl className="fl-review-context">
      {entries.map(([field, value]) => (
        <div
          key={field}
          className={
            field === highlight ? 'fl-review-context__row is-disputed' : 'fl-review-context__row'
          }
        >
          <dt>
            {fieldLabel(record.collection, field)}
            {field === highlight ? ' (disputed)' : ''}
          </dt>
          <dd>{formatFieldValue(record.collection, field, value, { timeZone })}</dd>
        </div>
      ))}
    </dl>
  );
}

export function DisputeView({ dispute, now, onResolve, onOpenHistory, onClose }: DisputeViewProps) {
  const label = fieldLabel(dispute.collection, dispute.field);
  const correctable = canEnterCorrection(dispute.collection, dispute.field);
  const [serverError, setServerError] = useState<string | null>(null);
  const {
    control,
    register,
    handleSubmit,
    formState: { errors, isSubmitting },
  } = useForm<ResolveForm>({
    resolver: zodResolver(resolveFormSchema(dispute)) as never,
    defaultValues: { choice: '', corrected: null, note: '' },
  });
  const choice = useWatch({ control, name: 'choice' });
  const tz = dispute.timeZone;

  const submit = handleSubmit(async (form) => {
    setServerError(null);
    let value: unknown;
    if (form.choice === CORRECTED) {
      const check = checkCorrectedValue(dispute.collection, dispute.field, form.corrected);
      if (!check.ok) return;
      value = check.value;
    } else {
      const index = Number(form.choice.replace('candidate-', ''));
      value = dispute.candidates[index]?.value;
    }
    try {
      await onResolve({ value, note: form.note.trim() });
    } catch (error) {
      setServerError(error instanceof Error ? error.message : String(error));
    }
  });

  return (
    <article className="fl-review-dispute" aria-labelledby={`dispute-${dispute.id}-title`}>
      <header className="fl-review-dispute__head">
        <h2 id={`dispute-${dispute.id}-title`}>
          {collectionLabel(dispute.collection)}: {label}
        </h2>
        <p className="fl-muted">
          {dispute.patientName ?? 'Patient not on record'}
          {dispute.visitDate ? ` · visit of ${dispute.visitDate}` : ''}
          {dispute.siteName ? ` · ${dispute.siteName}` : ''} · open for{' '}
          {formatAge(dispute.openedAt, now)} (since {formatInstant(dispute.openedAt, tz)})
        </p>
        {dispute.signedVisit ? (
          <p className="fl-review-banner" role="note">
            This visit is Signed. Your resolution will be recorded as an Addendum: the signed value
            stays in the record’s history, with your note beside the correction.
          </p>
        ) : null}
      </header>

      {/* Not a <form>: the angle control carries its own typed-entry form, and forms cannot nest. */}
      <div role="form" aria-label={`Resolve the dispute on ${label}`}>
        <fieldset className="fl-review-candidates">
          <legend>Values entered</legend>
          {dispute.candidates.map((candidate, index) => {
            const id = `candidate-${index}`;
            return (
              <label key={`${candidate.hlc}-${index}`} className="fl-review-candidate fl-touch">
                <input type="radio" value={id} {...register('choice')} />
                <span className="fl-review-candidate__value">
                  {formatFieldValue(dispute.collection, dispute.field, candidate.value, {
                    timeZone: tz,
                  })}
                </span>
                {candidate.provisional ? (
                  <span className="fl-review-badge">Provisional (held now)</span>
                ) : null}
                <span className="fl-review-candidate__who">
                  Entered by {candidate.by.name} on {candidate.device.label},{' '}
                  {formatStampTime(candidate.hlc, tz)}
                </span>
              </label>
            );
          })}
          {correctable ? (
            <label className="fl-review-candidate fl-touch">
              <input type="radio" value={CORRECTED} {...register('choice')} />
              <span className="fl-review-candidate__value">Enter a corrected value</span>
            </label>
          ) : (
            <p className="fl-muted">
              {label} is a list or group of values: choose one of the values entered.
            </p>
          )}
          {errors.choice?.message ? (
            <p className="fl-field-error" role="alert">
              {errors.choice.message}
            </p>
          ) : null}
        </fieldset>

        {choice === CORRECTED ? (
          <Controller
            control={control}
            name="corrected"
            render={({ field, fieldState }) => (
              <CorrectedValueField
                collection={dispute.collection}
                field={dispute.field}
                value={field.value}
                onChange={field.onChange}
                error={fieldState.error?.message}
              />
            )}
          />
        ) : null}

        <div className="fl-review-field">
          <label htmlFor={`note-${dispute.id}`} className="fl-review-field__label">
            Note: why this value (required)
          </label>
          <textarea
            id={`note-${dispute.id}`}
            className="fl-input fl-review-note"
            rows={3}
            aria-invalid={errors.note ? true : undefined}
            aria-describedby={errors.note ? `note-${dispute.id}-error` : undefined}
            {...register('note')}
          />
          {errors.note?.message ? (
            <p id={`note-${dispute.id}-error`} className="fl-field-error" role="alert">
              {errors.note.message}
            </p>
          ) : null}
        </div>

        {serverError ? (
          <p className="fl-field-error" role="alert">
            {serverError}
          </p>
        ) : null}

        <div className="fl-review-actions">
          <button
            type="button"
            className="fl-touch fl-button fl-button--primary"
            disabled={isSubmitting}
            onClick={() => void submit()}
          >
            {isSubmitting
              ? 'Resolving…'
              : dispute.signedVisit
                ? 'Resolve as Addendum'
                : 'Resolve dispute'}
          </button>
          {onOpenHistory ? (
            <button
              type="button"
              className="fl-touch fl-button fl-button--quiet"
              onClick={() => onOpenHistory(dispute.collection, dispute.recordId)}
            >
              Record history
            </button>
          ) : null}
          {onClose ? (
            <button type="button" className="fl-touch fl-button fl-button--quiet" onClick={onClose}>
              Back to Disputes
            </button>
          ) : null}
        </div>
      </div>

      <section
        aria-labelledby={`dispute-${dispute.id}-context`}
        className="fl-review-context-panel"
      >
        <h3 id={`dispute-${dispute.id}-context`}>
          Rest of this {collectionLabel(dispute.collection).toLowerCase()} record
        </h3>
        <ContextFields record={dispute.record} highlight={dispute.field} timeZone={tz} />
        {dispute.related.map((record) => (
          <div key={record.id}>
            <h4>Another {collectionLabel(record.collection).toLowerCase()} record of this visit</h4>
            <ContextFields record={record} timeZone={tz} />
          </div>
        ))}
      </section>
    </article>
  );
}
