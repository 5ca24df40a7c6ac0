// Registering a patient on the tablet: the shared patient schema through zodResolver, with the
// date of birth checked against today. Messages sit beside their fields.
import { zodResolver } from '@hookform/resolvers/zod';
import { fieldMeta, patientSchemaAsOf, type RecordFieldsInput } from '@fuselight/shared';
import { useMemo, useState } from 'react';
import { useForm } from 'react-hook-form';
import { useUnsavedEdits } from '../../app/unsaved-edits';
import { useEditContext } from '../../data';
import { useCharting } from '../../data/charting';
import './charting.css';

export interface NewPatientFormProps {
  siteId: string;
  today: string;
  onCreated: (patientId: string) => void;
  onCancel: () => void;
}

type PatientInput = RecordFieldsInput<'patient'>;

const blankToNull = (value: unknown) => (value === '' ? null : value);

export function NewPatientForm({ siteId, today, onCreated, onCancel }: NewPatientFormProps) {
  const schema = useMemo(() => patientSchemaAsOf(today), [today]);
  const charting = useCharting();
  const editContext = useEditContext();
  const [saveError, setSaveError] = useState<string | null>(null);
  const {
    register,
    handleSubmit,
    formState: { errors, isSubmitting, isDirty },
  } = useForm<PatientInput>({
    resolver: zodResolver(schema) as never,
    defaultValues: {
      siteId,
      givenName: '',
      familyName: '',
      dateOfBirth: '',
      clinicNumber: '',
      sex: null,
      notes: null,
    },
    mode: 'onTouched',
  });
  // A patient being registered and not saved: an app update waits (app/update-gate.ts).
  useUnsavedEdits(isDirty);

  const submit = handleSubmit(async (fields) => {
    setSaveError(null);
    try {
      const id = await charting.createPatient(fields, editContext());
      onCreated(id);
    } catch (error) {
      setSaveError(error instanceof Error ? error.message : String(error));
    }
  });

  const field = (
    name: 'givenName' | 'familyName' | 'dateOfBirth' | 'clinicNumber',
    label: string,
    props: Record<string, unknown> = {},
  ) => {
    const id = `new-patient-${name}`;
    const message = errors[name]?.message;
    return (
      <div className="flc-field">
        <label htmlFor={id}>{label}</label>
        <input
          id={id}
          className="flc-input"
          aria-invalid={message ? 'true' : 'false'}
          aria-describedby={`${id}-message`}
          {...props}
          {...register(name)}
        />
        <p id={`${id}-message`} className="flc-message flc-message--error">
          {message ?? ''}
        </p>
      </div>
    );
  };

  return (
    <form
      className="flc-panel"
      aria-labelledby="new-patient-title"
      noValidate
      onSubmit={(event) => void submit(event)}
    >
      <h2 id="new-patient-title">New patient</h2>
      <div className="flc-grid">
        {field('givenName', 'Given name', { autoComplete: 'off', autoFocus: true })}
        {field('familyName', 'Family name', { autoComplete: 'off' })}
        {field('dateOfBirth', 'Date of birth', { type: 'date', max: today })}
        {field('clinicNumber', 'Clinic number', { autoComplete: 'off' })}
        <div className="flc-field">
          <label htmlFor="new-patient-sex">Sex</label>
          <select
            id="new-patient-sex"
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
        <label htmlFor="new-patient-notes">Notes</label>
        <textarea
          id="new-patient-notes"
          className="flc-input"
          {...register('notes', { setValueAs: blankToNull })}
        />
        <p className="flc-message flc-message--error">{errors.notes?.message ?? ''}</p>
      </div>
      <p className="flc-message flc-message--error" role="alert">
        {saveError ? `Not saved: ${saveError}` : (errors.siteId?.message ?? '')}
      </p>
      <div className="flc-actions">
        <button type="submit" className="flc-button flc-button--primary" disabled={isSubmitting}>
          {isSubmitting ? 'Saving…' : 'Save patient'}
        </button>
        <button type="button" className="flc-button" onClick={onCancel}>
          Cancel
        </button>
      </div>
    </form>
  );
}
