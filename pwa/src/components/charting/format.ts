// How the charting screens write people, dates and field values.
import {
  ageOnDate,
  fieldMeta,
  type CollectionName,
  type FieldMeta,
  type JsonValue,
} from '@fuselight/shared';
import type { LocalRecord } from '../../data';

export function patientFullName(patient: LocalRecord<'patient'> | null | undefined): string {
  if (!patient) return 'Unknown patient';
  return `${patient.fields.givenName} ${patient.fields.familyName}`;
}

/** "2016-04-09" → "9 Apr 2016", read the same on every tablet. */
export function formatDate(date: string): string {
  const [y, m, d] = date.split('-').map(Number);
  if (!y || !m || !d) return date;
  const months = [
    'Jan',
    'Feb',
    'Mar',
    'Apr',
    'May',
    'Jun',
    'Jul',
    'Aug',
    'Sep',
    'Oct',
    'Nov',
    'Dec',
  ];
  return `${d} ${months[m - 1] ?? ''} ${y}`;
}

export function describeAge(dateOfBirth: string, onDate: string): string {
  const age = ageOnDate(dateOfBirth, onDate);
  return age === undefined ? '' : `${age} ${age === 1 ? 'year' : 'years'}`;
}

/**
 * A field's value in words with its unit ("21°", "Present", "not recorded"), for an Addendum's
 * value before and after.
 */
export function describeFieldValue(
  collection: CollectionName,
  field: string,
  value: JsonValue | null | undefined,
): string {
  if (value === null || value === undefined) return 'not recorded';
  const meta = (fieldMeta[collection] as Record<string, FieldMeta>)[field];
  const option = (v: JsonValue) =>
    typeof v === 'string' ? (meta?.options?.find((o) => o.value === v)?.label ?? v) : null;
  if (typeof value === 'boolean') {
    if (field === 'deleted') return value ? 'deleted' : 'kept';
    return value ? 'Yes' : 'No';
  }
  if (typeof value === 'number') {
    const unit = meta?.unit ?? null;
    const text = value < 0 ? `−${Math.abs(value)}` : String(value);
    if (unit === null || unit === 'grade') return text;
    return unit === '°' || unit === 'Δ' || unit === '″' ? `${text}${unit}` : `${text} ${unit}`;
  }
  if (typeof value === 'string') return option(value) ?? value;
  if (Array.isArray(value)) {
    if (value.length === 0) return 'none';
    return value
      .map((v) => option(v) ?? (typeof v === 'string' ? v : JSON.stringify(v)))
      .join(', ');
  }
  return JSON.stringify(value);
}
