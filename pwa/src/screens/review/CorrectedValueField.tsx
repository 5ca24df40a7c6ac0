// A corrected value for a disputed field, entered through the same controls as the Visit form
// (AngleControl for angles, the big choice buttons for choices and yes/no) and checked by the
// field's own schema from @fuselight/shared, so an error names the field in the trade's words.
import {
  isCollectionName,
  recordSchemas,
  type CollectionName,
  type FieldMeta,
} from '@fuselight/shared';
import { useId } from 'react';
import type { z } from 'zod';
import { AngleControl, ChoiceGroup, YesNoChoice } from '../../components/controls';
import { angleAxisOf, fieldLabel, metaOf } from './field-format';

export type CorrectedValueCheck = { ok: true; value: unknown } | { ok: false; message: string };

function fieldSchemaOf(collection: string, field: string): z.ZodType | undefined {
  if (!isCollectionName(collection)) return undefined;
  const shape = recordSchemas[collection as CollectionName].shape as Record<string, z.ZodType>;
  return Object.hasOwn(shape, field) ? shape[field] : undefined;
}

/** Whether a corrected value can be typed for this field here (lists and objects cannot). */
export function canEnterCorrection(collection: string, field: string): boolean {
  const meta = metaOf(collection, field);
  if (!meta || !fieldSchemaOf(collection, field)) return false;
  return !['object', 'list', 'choices'].includes(meta.kind);
}

/**
 * Checks a corrected value with the field's schema. The draft is what the control holds: a
 * number or null for numeric fields, a boolean or null, a string (possibly typed) otherwise.
 */
export function checkCorrectedValue(
  collection: string,
  field: string,
  draft: unknown,
): CorrectedValueCheck {
  const label = fieldLabel(collection, field);
  const schema = fieldSchemaOf(collection, field);
  const meta = metaOf(collection, field);
  if (!schema || !meta) return { ok: false, message: `${label} cannot be corrected here.` };
  let value = draft;
  if (meta.kind === 'number' && typeof draft === 'string') {
    const typed = draft.trim().replace(/[−–]/g, '-').replace(',', '.');
    if (typed === '') value = null;
    else if (!/^[+-]?(\d+(\.\d*)?|\.\d+)$/.test(typed)) {
      return { ok: false, message: `${label}: “${draft.trim()}” is not a number.` };
    } else value = Number(typed);
  }
  if (typeof value === 'string' && value.trim() === '' && meta.kind !== 'text') value = null;
  if (value === undefined) return { ok: false, message: `${label}: enter the corrected value.` };
  if (value === null) {
    return schema.safeParse(null).success
      ? { ok: true, value: null }
      : { ok: false, message: `${label} is required and cannot be cleared.` };
  }
  const result = schema.safeParse(value);
  if (!result.success) {
    const message = result.error.issues[0]?.message ?? `${label} is not valid`;
    return { ok: false, message: message.startsWith(label) ? message : `${label}: ${message}` };
  }
  return { ok: true, value: result.data };
}

export interface CorrectedValueFieldProps {
  collection: string;
  field: string;
  value: unknown;
  onChange: (value: unknown) => void;
  error?: string | undefined;
}

function angleUnit(meta: FieldMeta): 'deg' | 'pd' {
  return meta.unit === 'Δ' ? 'pd' : 'deg';
}

export function CorrectedValueField({
  collection,
  field,
  value,
  onChange,
  error,
}: CorrectedValueFieldProps) {
  const id = useId();
  const meta = metaOf(collection, field);
  const label = `Corrected ${fieldLabel(collection, field).toLowerCase()}`;
  const errorId = `${id}-error`;
  const errorText = error ? (
    <p id={errorId} className="fl-field-error" role="alert">
      {error}
    </p>
  ) : null;
  if (!meta) return null;
  const axis = angleAxisOf(meta);
  if (axis && meta.min !== undefined && meta.max !== undefined) {
    return (
      <div>
        <AngleControl
          label={label}
          axis={axis}
          unit={angleUnit(meta)}
          value={typeof value === 'number' ? value : null}
          onChange={onChange}
          min={meta.min}
          max={meta.max}
          {...(meta.hint ? { hint: meta.hint } : {})}
        />
        {errorText}
      </div>
    );
  }
  if (meta.kind === 'boolean') {
    return (
      <div>
        <YesNoChoice
          label={label}
          value={typeof value === 'boolean' ? value : null}
          onChange={onChange}
        />
        {errorText}
      </div>
    );
  }
  if (meta.kind === 'choice' && meta.options) {
    return (
      <div>
        <ChoiceGroup
          label={label}
          options={meta.options}
          value={typeof value === 'string' ? value : null}
          onChange={onChange}
        />
        {errorText}
      </div>
    );
  }
  const unitWords = meta.unit && meta.unit !== 'grade' ? ` (${meta.unit})` : '';
  return (
    <div className="fl-review-field">
      <label htmlFor={id} className="fl-review-field__label">
        {label}
        {unitWords}
      </label>
      <input
        id={id}
        className="fl-touch fl-input"
        type="text"
        inputMode={meta.kind === 'number' ? 'decimal' : 'text'}
        autoComplete="off"
        value={
          typeof value === 'string'
            ? value
            : value === null || value === undefined
              ? ''
              : String(value)
        }
        aria-invalid={error ? true : undefined}
        aria-describedby={error ? errorId : undefined}
        onChange={(event) => onChange(event.target.value)}
      />
      {meta.hint ? <p className="fl-muted">{meta.hint}</p> : null}
      {errorText}
    </div>
  );
}
