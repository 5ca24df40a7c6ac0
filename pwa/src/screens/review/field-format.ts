// Puts a stored field value into the words the clinician saw when entering it, for the Review
// desk: labels and units come from the shared field registry, angles get the trade's sign words
// and the other unit (degrees with prism dioptres), choices their option words. Never raw JSON.
import { describeDeviation, fieldMeta, isCollectionName, type FieldMeta } from '@fuselight/shared';

export const NOT_RECORDED = 'Not recorded';

export function metaOf(collection: string, field: string): FieldMeta | undefined {
  if (field === 'deleted') {
    return { label: 'Deleted', unit: null, kind: 'boolean', required: false };
  }
  if (!isCollectionName(collection)) return undefined;
  return (fieldMeta[collection] as Record<string, FieldMeta>)[field];
}

/** The field's label in the trade's words ("Subjective horizontal angle"). */
export function fieldLabel(collection: string, field: string): string {
  return metaOf(collection, field)?.label ?? field;
}

export type AngleAxis = 'horizontal' | 'vertical' | 'torsion';

/** Which angle a numeric field is, read from its registered unit and sign hint. */
export function angleAxisOf(meta: FieldMeta | undefined): AngleAxis | null {
  if (!meta || meta.kind !== 'number') return null;
  const hint = meta.hint ?? '';
  if (meta.unit === 'Δ' && hint.includes('R/L')) return 'vertical';
  if (meta.unit === '°' && hint.includes('eso')) return 'horizontal';
  if (meta.unit === '°' && hint.includes('cyclo')) return 'torsion';
  return null;
}

function plainNumber(value: number): string {
  const text = String(Math.round(value * 100) / 100);
  return text.replace('-', '−');
}

function withUnit(value: number, meta: FieldMeta): string {
  const text = plainNumber(value);
  if (meta.unit === null || meta.unit === 'grade') return text;
  if (meta.unit === '°' || meta.unit === 'Δ' || meta.unit === '″') return `${text}${meta.unit}`;
  return `${text} ${meta.unit}`;
}

function describeAngle(axis: AngleAxis, value: number): string {
  switch (axis) {
    case 'horizontal':
      return describeDeviation({ horizontalDeg: value }).horizontal?.text ?? plainNumber(value);
    case 'vertical':
      return describeDeviation({ verticalPd: value }).vertical?.text ?? plainNumber(value);
    case 'torsion':
      return describeDeviation({ torsionDeg: value }).torsion?.text ?? plainNumber(value);
  }
}

function optionWord(meta: FieldMeta, value: string): string {
  return meta.options?.find((option) => option.value === value)?.label ?? value;
}

function describeComposite(value: unknown): string {
  if (value === null || value === undefined) return NOT_RECORDED;
  if (Array.isArray(value)) {
    if (value.length === 0) return 'None';
    return value.map(describeComposite).join('; ');
  }
  if (typeof value === 'object') {
    return Object.entries(value as Record<string, unknown>)
      .filter(([, inner]) => inner !== null && inner !== undefined)
      .map(
        ([key, inner]) =>
          `${key.replace(/([A-Z])/g, ' $1').toLowerCase()}: ${describeComposite(inner)}`,
      )
      .join(', ');
  }
  if (typeof value === 'boolean') return value ? 'Yes' : 'No';
  return String(value);
}

export interface FormatOptions {
  /** IANA zone of the clinic, for date-times. */
  timeZone?: string;
}

/**
 * A value as the clinician sees it: "eso 12.0° (21.3Δ)", "Right eye", "Yes", "62 mm",
 * "Not recorded". Unknown fields fall back to plain words, never to JSON text.
 */
export function formatFieldValue(
  collection: string,
  field: string,
  value: unknown,
  options: FormatOptions = {},
): string {
  if (value === null || value === undefined) return NOT_RECORDED;
  const meta = metaOf(collection, field);
  if (!meta) return describeComposite(value);
  switch (meta.kind) {
    case 'number': {
      if (typeof value !== 'number') return describeComposite(value);
      const axis = angleAxisOf(meta);
      return axis ? describeAngle(axis, value) : withUnit(value, meta);
    }
    case 'boolean':
      return typeof value === 'boolean' ? (value ? 'Yes' : 'No') : describeComposite(value);
    case 'choice':
      return typeof value === 'string' ? optionWord(meta, value) : describeComposite(value);
    case 'choices':
      return Array.isArray(value)
        ? value.length === 0
          ? 'None'
          : value.map((item) => optionWord(meta, String(item))).join(', ')
        : describeComposite(value);
    case 'datetime':
      return typeof value === 'string' ? formatInstant(value, options.timeZone) : String(value);
    case 'date':
    case 'text':
    case 'email':
    case 'id':
      return typeof value === 'string'
        ? value === ''
          ? '(empty)'
          : value
        : describeComposite(value);
    case 'object':
    case 'list':
      return describeComposite(value);
  }
}

/** "1 Dec 2026, 09:31 GMT" in the clinic's zone (falls back to UTC for an unknown zone). */
export function formatInstant(iso: string, timeZone = 'UTC'): string {
  const date = new Date(iso);
  if (Number.isNaN(date.getTime())) return iso;
  const options: Intl.DateTimeFormatOptions = {
    day: 'numeric',
    month: 'short',
    year: 'numeric',
    hour: '2-digit',
    minute: '2-digit',
    timeZoneName: 'short',
  };
  try {
    return new Intl.DateTimeFormat('en-GB', { ...options, timeZone }).format(date);
  } catch {
    return new Intl.DateTimeFormat('en-GB', { ...options, timeZone: 'UTC' }).format(date);
  }
}

/** The wall time of an HLC stamp (`<15-digit ms>-<counter>-<device>`), or null when malformed. */
export function hlcWallTime(hlc: string): Date | null {
  const match = /^(\d{15})-\d{5}-/.exec(hlc);
  if (!match) return null;
  const date = new Date(Number(match[1]));
  return Number.isNaN(date.getTime()) ? null : date;
}

/** When a candidate was entered, from its stamp, in the clinic's time zone. */
export function formatStampTime(hlc: string, timeZone?: string): string {
  const wall = hlcWallTime(hlc);
  return wall ? formatInstant(wall.toISOString(), timeZone) : 'time unknown';
}

/** "3 h", "2 d", "12 min": how long a dispute has been open. */
export function formatAge(openedAt: string, now: Date): string {
  const ms = Math.max(0, now.getTime() - new Date(openedAt).getTime());
  const minutes = Math.floor(ms / 60_000);
  if (minutes < 60) return `${minutes} min`;
  const hours = Math.floor(minutes / 60);
  if (hours < 48) return `${hours} h`;
  return `${Math.floor(hours / 24)} d`;
}
