// A patient's details on the Chart, editable: the same shared schema as registration, and only
// the fields that changed are written.
import { zodResolver } from '@hookform/resolvers/zod';
import { fieldMeta, patientSchemaAsOf, type RecordFieldsInput } from '@fuselight/shared';
import { useMemo, useState } from 'react';
import { useForm } from 'react-hook-form';
import { useUnsavedEdits } from '../../app/unsaved-edits';
import { useEditContext, type LocalRecord } from '../../data';
import { useCharting } from '../../data/charting';
import { DisputeMark } from './ScreenState';

type PatientInput = RecordFieldsInput<'patient'>;
const blankToNull = (value: unknown) => (value === '' ? null : value);
const TEXT_FIELDS = [
  ['givenName', 'Given name', 'text'],
  ['familyName', 'Family name', 'text'],
  ['dateOfBirth', 'Date of birth', 'date'],
  ['clinicNumber', 'Clinic number', 'text'],
] as const;

export function PatientDetailsForm({
  patient,
  today,
}: {
  patient: LocalRecord<'patient'>;
  today: string;
}) {
  const schema = useMemo(() => patientSchemaAsOf(today), [today]);
  const charting = useCharting();
  const editContext = useEditContext();
  const [message, setMessage] = useState('');
  const {
    register,
    handleSubmit,
    reset,
    formState: { errors, isSubmitting, isDirty, dirtyFields },
  } = useForm<PatientInput>({
    resolver: zodResolver(schema) as never,
    defaultValues: {
      ...patient.fields,
      sex: patient.fields.sex ?? null,
      notes: patient.fields.notes ?? null,
    },
    mode: 'onTouched',
  });
  // Changed and not saved: an app update waits (app/update-gate.ts).
  useUnsavedEdits(isDirty);
  const submit = handleSubmit(async (fields) => {
    setMessage('Saving…');
    const changed = Object.fromEntries(
      Object.entries(fields).filter(([key]) => (dirtyFields as Record<string, unknown>)[key]),
    );
    try {
      await charting.updatePatient(patient.id, changed, editContext());
      reset(fields);
      setMessage('Saved on this tablet');
    } catch (error) {
      setMessage(`Not saved: ${error instanceof Error ? error.message : String(error)}`);
    }
  });
  return (
    <form
      className="flc-panel"
      aria-labelledby="patient-details-title"
      noValidate
      onSubmit={(event) => void submit(event)}
    >
      <header>
        <h2 id="patient-details-title">Patient details</h2>
        <span className="flc-saved" role="status" aria-live="polite">
          {message}
        </span>
      </header>
      <div className="flc-grid">
        {TEXT_FIELDS.map(([name, label, type]) => {
          const id = `patient-${name}`;
          const error = errors[name]?.message;
          return (
            <div key={name} className="flc-field">
              <label htmlFor={id}>
                {label}
                <DisputeMark field={name} conflicts={patient.conflicts} />
              </label>
              <input
                id={id}
                className="flc-input"
                type={type}
                autoComplete="off"
                aria-invalid={error ? 'true' : 'false'}
                aria-describedby={`${id}-message`}
                {...(type === 'date' ? { max: today } : {})}
                {...register(name)}
              />
              <p id={`${id}-message`} className="flc-message flc-message--error">
                {error ?? ''}
              </p>
            </div>
          );
        })}
        <div className="flc-field">
          <label htmlFor="patient-sex">
            Sex
            <DisputeMark field="sex" conflicts={patient.conflicts} />
          </label>
          <select
            id="patient-sex"
            className="flc-input"
            {...register('sex', { setValueAs: blankToNull })}
          >
            <option value="">Not given</option>
            {(fieldMeta.patient.sex.options ?? []).map((option) => (
              <option key={option.value} value={option.value}>
                {option.label}
              </option>
            ))}
          </select>
          <p className="flc-message flc-message--error">{errors.sex?.message ?? ''}</p>
        </div>
      </div>
      <div className="flc-field">
        <label htmlFor="patient-notes">
          Notes
          <DisputeMark field="notes" conflicts={patient.conflicts} />
        </label>
        <textarea
          id="patient-notes"
          className="flc-input"
          {...register('notes', { setValueAs: blankToNull })}
        />
        <p className="flc-message flc-message--error">{errors.notes?.message ?? ''}</p>
      </div>
      <button
        type="submit"
        className="flc-button flc-button--primary"
        disabled={isSubmitting || !isDirty}
      >
        Save details
      </button>
    </form>
  );
}
