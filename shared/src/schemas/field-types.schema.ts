// Building blocks for record fields. Each builder returns a zod schema whose error messages name
// the field in the trade's words, and registers the field's label and unit so that screens and the
// review desk read them from the same place the validation does.
import { z } from 'zod';

export type FieldUnit =
  '°' | 'Δ' | '″' | 'logMAR' | 'mm' | 'cm' | 'D' | 'weeks' | 'bytes' | 'grade';

export type FieldKind =
  | 'id'
  | 'text'
  | 'number'
  | 'boolean'
  | 'choice'
  | 'choices'
  | 'date'
  | 'datetime'
  | 'email'
  | 'object'
  | 'list';

export interface FieldOption {
  value: string;
  label: string;
}

/** What a screen needs to label a field and render its value. */
export interface FieldMeta {
  label: string;
  unit: FieldUnit | null;
  kind: FieldKind;
  /** Set by the registry: a full record must carry this field. */
  required: boolean;
  min?: number;
  max?: number;
  options?: readonly FieldOption[];
  hint?: string;
}

export type FieldMetaInput = Omit<FieldMeta, 'required'>;

/** Label and unit of every field schema built here, keyed by the schema object itself. */
export const fieldMetaRegistry = z.registry<FieldMetaInput>();

function described<T extends z.ZodType>(schema: T, meta: FieldMetaInput): T {
  fieldMetaRegistry.add(schema, meta);
  return schema;
}

/**
 * Registers label metadata on a schema built by hand. Call it last: zod returns a new schema from
 * every refinement, and the metadata stays with the instance it was registered on.
 */
export function withMeta<T extends z.ZodType>(schema: T, meta: FieldMetaInput): T {
  return described(schema, meta);
}

/** "X is required" for a missing value, otherwise "X must be <expected>". */
function typeError(label: string, expected: string) {
  return (issue: { input?: unknown }) =>
    issue.input === undefined ? `${label} is required` : `${label} must be ${expected}`;
}

/** Finds the label and unit of a field, looking through `.nullish()` / `.optional()` wrappers. */
export function metaOfSchema(schema: z.ZodType): FieldMetaInput | undefined {
  let current: z.ZodType = schema;
  for (;;) {
    const found = fieldMetaRegistry.get(current);
    if (found) return found;
    if (current instanceof z.ZodOptional || current instanceof z.ZodNullable) {
      current = current.unwrap() as z.ZodType;
      continue;
    }
    return undefined;
  }
}

const SYMBOL_UNITS: ReadonlySet<FieldUnit> = new Set<FieldUnit>(['°', 'Δ', '″']);

function formatNumber(value: number, digits: number, signed: boolean): string {
  const text = Math.abs(value).toFixed(digits);
  if (value < 0) return `−${text}`;
  if (signed && value > 0) return `+${text}`;
  return text;
}

/** "between −90° and +90°", "between 40 and 80 mm", "between −0.5 and 3.0 logMAR". */
export function describeRange(
  min: number,
  max: number,
  unit: FieldUnit | null,
  options: { digits?: number; signed?: boolean } = {},
): string {
  const digits = options.digits ?? 0;
  const signed = options.signed ?? false;
  const low = formatNumber(min, digits, signed);
  const high = formatNumber(max, digits, signed);
  // A grade is a count of steps; "between −4 and +4 grade" reads worse than no unit.
  if (unit === null || unit === 'grade') return `between ${low} and ${high}`;
  if (SYMBOL_UNITS.has(unit)) return `between ${low}${unit} and ${high}${unit}`;
  return `between ${low} and ${high} ${unit}`;
}

export interface MeasurementOptions {
  label: string;
  unit: FieldUnit | null;
  min: number;
  max: number;
  /** Show a + on positive bounds (signed angles and positions). */
  signed?: boolean;
  /** Decimal places in the range message. */
  digits?: number;
  /** Whole numbers only (grades, counts). */
  integer?: boolean;
  hint?: string;
}

/** A finite number within a clinical range; NaN and ±Infinity are refused. */
export function measurement(options: MeasurementOptions): z.ZodNumber {
  const { label, unit, min, max } = options;
  const range = describeRange(min, max, unit, options);
  const rangeMessage = options.integer
    ? `${label} must be a whole number ${range}`
    : `${label} must be ${range}`;
  // One clone with every check, rather than a clone per chained .min()/.max()/.int(): a form
  // holds hundreds of these, and the tablet builds them all at start.
  const checks = [z.gte(min, { error: rangeMessage }), z.lte(max, { error: rangeMessage })];
  const number = z.number({ error: typeError(label, 'a number') });
  const schema = options.integer
    ? number.check(...checks, z.int({ error: rangeMessage }))
    : number.check(...checks);
  return described(schema, {
    label,
    unit,
    kind: 'number',
    min,
    max,
    ...(options.hint === undefined ? {} : { hint: options.hint }),
  });
}

/** Text with a length limit; surrounding spaces are trimmed. */
export function text(label: string, options: { max: number; min?: number; hint?: string }) {
  const min = options.min ?? 0;
  const schema = z.string({ error: typeError(label, 'text') }).check(
    z.trim(),
    z.minLength(min, {
      error: min <= 1 ? `${label} cannot be empty` : `${label} needs at least ${min} characters`,
    }),
    z.maxLength(options.max, { error: `${label} must be at most ${options.max} characters` }),
  );
  return described(schema, {
    label,
    unit: null,
    kind: 'text',
    ...(options.hint === undefined ? {} : { hint: options.hint }),
  });
}

/** One of a fixed set of values, each with the words a screen shows for it. */
export function choice<const V extends readonly [string, ...string[]]>(
  label: string,
  options: { readonly [K in V[number]]: string },
  values: V,
) {
  const spoken = values.map((value) => options[value as V[number]]).join(', ');
  const schema = z.enum(values, { error: typeError(label, `one of: ${spoken}`) });
  return described(schema, {
    label,
    unit: null,
    kind: 'choice',
    options: values.map((value) => ({ value, label: options[value as V[number]] })),
  });
}

export function yesNo(label: string, hint?: string) {
  return described(z.boolean({ error: typeError(label, 'yes or no') }), {
    label,
    unit: null,
    kind: 'boolean',
    ...(hint === undefined ? {} : { hint }),
  });
}

export function id(label: string) {
  return described(z.uuid({ error: typeError(label, 'a UUID') }), {
    label,
    unit: null,
    kind: 'id',
  });
}

/** A calendar date as YYYY-MM-DD (a real day: 2023-02-29 is refused). */
export function calendarDate(label: string) {
  return described(z.iso.date({ error: typeError(label, 'a real date written YYYY-MM-DD') }), {
    label,
    unit: null,
    kind: 'date',
  });
}

/** An instant in UTC, ISO 8601 with Z, as the server writes it. */
export function instant(label: string) {
  return described(
    z.iso.datetime({ error: typeError(label, 'a UTC time like 2026-12-01T09:30:00.000Z') }),
    { label, unit: null, kind: 'datetime' },
  );
}

export function emailAddress(label: string) {
  return described(
    z
      .email({ error: typeError(label, 'an e-mail address') })
      .max(254, { error: `${label} is too long` }),
    {
      label,
      unit: null,
      kind: 'email',
    },
  );
}

/**
 * Any JSON value, kept as a whole (an Addendum's value before and after a change, which may be a
 * number, text, a list or an object depending on the field it amends).
 */
export function jsonValue(label: string) {
  return described(z.json({ error: `${label} must be a JSON value` }), {
    label,
    unit: null,
    kind: 'object',
  });
}

/** Registers label metadata on a composite field (an object or a list stored as one value). */
export function compositeField<T extends z.ZodType>(
  schema: T,
  meta: { label: string; kind: 'object' | 'list' | 'choices'; options?: readonly FieldOption[] },
): T {
  return described(schema, { unit: null, ...meta });
}

/** Why a section was not done, e.g. "not tested: patient tired". */
export const skippedReason = text('Reason not done', { max: 500, min: 1 });

export const eyeWords = { right: 'Right eye', left: 'Left eye' } as const;
export const EYES = ['right', 'left'] as const;
export type Eye = (typeof EYES)[number];

export const bsvResultWords = {
  present: 'Present',
  absent: 'Absent',
  notTested: 'Not tested',
} as const;
export const BSV_RESULTS = ['present', 'absent', 'notTested'] as const;
export type BsvResult = (typeof BSV_RESULTS)[number];
