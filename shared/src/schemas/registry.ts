// The list of synced collections and their record schemas, with the validation the server runs on
// every pushed change and the form helpers (defaults, labels, units) the tablet screens use.
// `id`, `version` and `deleted` are the record envelope, never fields.
import { type z } from 'zod';
import {
  accommodationSchema,
  nearPointConvergenceSchema,
  stereoacuitySchema,
} from './near-vision.schema';
import {
  amblyoscopeAnglesSchema,
  amblyoscopeSetupSchema,
  fusionalRangesSchema,
  fusionSchema,
  grossStereopsisSchema,
  simultaneousPerceptionSchema,
  suppressionScotomaSchema,
} from './amblyoscope.schema';
import { addendumSchema } from './addendum.schema';
import { attachmentSchema } from './attachment.schema';
import {
  COLLECTIONS,
  SECTION_COLLECTIONS,
  type CollectionName,
  type SectionCollectionName,
} from './collection-names.schema';
import { coverTestSchema, prismCoverTestSchema } from './cover-test.schema';
import { type FieldMeta, metaOfSchema } from './field-types.schema';
import { letterSchema } from './letter.schema';
import { motilitySchema } from './motility.schema';
import { patientSchema } from './patient.schema';
import { planSchema } from './plan.schema';
import { SECTION_PLACEMENT_KEYS, type SectionPlacementKey } from './section.schema';
import { visualAcuitySchema } from './acuity.schema';
import { visitSchema } from './visit.schema';

/**
 * Version of these record schemas; a device sends it with every push. An additive change (a new
 * collection or a new optional field) keeps it: everything a device of the same version sends
 * stays valid. A change that would refuse what such a device sends is a new version.
 */
export const SCHEMA_VERSION = 1;

export {
  COLLECTIONS,
  SECTION_COLLECTIONS,
  type CollectionName,
  type SectionCollectionName,
} from './collection-names.schema';

export const recordSchemas = {
  patient: patientSchema,
  visit: visitSchema,
  amblyoscopeSetup: amblyoscopeSetupSchema,
  simultaneousPerception: simultaneousPerceptionSchema,
  amblyoscopeAngles: amblyoscopeAnglesSchema,
  suppressionScotoma: suppressionScotomaSchema,
  fusion: fusionSchema,
  fusionalRanges: fusionalRangesSchema,
  grossStereopsis: grossStereopsisSchema,
  visualAcuity: visualAcuitySchema,
  coverTest: coverTestSchema,
  prismCoverTest: prismCoverTestSchema,
  nearPointConvergence: nearPointConvergenceSchema,
  accommodation: accommodationSchema,
  stereoacuity: stereoacuitySchema,
  motility: motilitySchema,
  plan: planSchema,
  attachment: attachmentSchema,
  letter: letterSchema,
  addendum: addendumSchema,
} as const satisfies Record<CollectionName, z.ZodObject>;

export type RecordSchemas = typeof recordSchemas;
/** The fields of a full record of collection C. */
export type RecordFields<C extends CollectionName> = z.infer<RecordSchemas[C]>;
/** What a form holds before parsing (same as RecordFields here: no transforms change types). */
export type RecordFieldsInput<C extends CollectionName> = z.input<RecordSchemas[C]>;
export type FieldName<C extends CollectionName> = keyof RecordSchemas[C]['shape'] & string;

export const ENVELOPE_KEYS = ['id', 'version', 'deleted'] as const;

const collectionSet: ReadonlySet<string> = new Set(COLLECTIONS);
const sectionSet: ReadonlySet<string> = new Set(SECTION_COLLECTIONS);

export function isCollectionName(value: unknown): value is CollectionName {
  return typeof value === 'string' && collectionSet.has(value);
}

export function isSectionCollection(value: unknown): value is SectionCollectionName {
  return typeof value === 'string' && sectionSet.has(value);
}

function shapeOf(collection: CollectionName): Readonly<Record<string, z.ZodType>> {
  return recordSchemas[collection].shape as Readonly<Record<string, z.ZodType>>;
}

function isRequired(schema: z.ZodType): boolean {
  return !schema.safeParse(undefined).success;
}

function buildFieldMeta(collection: CollectionName): Record<string, FieldMeta> {
  const entries = Object.entries(shapeOf(collection)).map(([field, schema]) => {
    const meta = metaOfSchema(schema) ?? { label: field, unit: null, kind: 'text' as const };
    return [field, { ...meta, required: isRequired(schema) }] as const;
  });
  return Object.fromEntries(entries);
}

/**
 * An object with one property per key, each worked out by `build` when first read and kept. The
 * tables below are read a collection at a time, so a tablet works out only those its screens
 * show, and none while this module loads (a start that built every table was one long task).
 */
function lazyTable<K extends string, V>(keys: readonly K[], build: (key: K) => V): Record<K, V> {
  const table = {} as Record<K, V>;
  for (const key of keys) {
    Object.defineProperty(table, key, {
      enumerable: true,
      configurable: true,
      get() {
        const value = build(key);
        Object.defineProperty(table, key, { value, enumerable: true, writable: false });
        return value;
      },
    });
  }
  return table;
}

/** Label (the trade's words), unit and kind of every field, for screens and the review desk. */
export const fieldMeta = lazyTable(COLLECTIONS, buildFieldMeta) as {
  readonly [C in CollectionName]: Readonly<Record<FieldName<C>, FieldMeta>>;
};

const requiredByCollection = lazyTable(COLLECTIONS, (collection) =>
  Object.freeze(
    Object.entries(fieldMeta[collection] as Record<string, FieldMeta>)
      .filter(([, meta]) => meta.required)
      .map(([field]) => field),
  ),
);

/** Field names a full record of the collection must carry (worked out once per collection). */
export function requiredFields(collection: CollectionName): readonly string[] {
  return requiredByCollection[collection] ?? [];
}

export type SectionDefaults<C extends SectionCollectionName> = Omit<
  RecordFieldsInput<C>,
  SectionPlacementKey
>;

// Every finding starts as "not recorded" (null) rather than a guess: a default of false for
// "dials zeroed" would chart a fact nobody observed. Lists start empty.
function buildSectionDefaults(collection: SectionCollectionName): Record<string, unknown> {
  const placement: ReadonlySet<string> = new Set(SECTION_PLACEMENT_KEYS);
  const defaults: Record<string, unknown> = {};
  for (const [field, meta] of Object.entries(fieldMeta[collection] as Record<string, FieldMeta>)) {
    if (placement.has(field)) continue;
    defaults[field] = meta.kind === 'list' || meta.kind === 'choices' ? [] : null;
  }
  return defaults;
}

/** Default form values per section (placement keys siteId, visitId, patientId left to the caller). */
export const sectionDefaults = lazyTable(SECTION_COLLECTIONS, buildSectionDefaults) as {
  readonly [C in SectionCollectionName]: Readonly<SectionDefaults<C>>;
};

export interface FieldError {
  field: string;
  message: string;
}

export type FieldValidation<T> = { ok: true; fields: T } | { ok: false; errors: FieldError[] };

function isPlainObject(value: unknown): value is Record<string, unknown> {
  return typeof value === 'object' && value !== null && !Array.isArray(value);
}

function unknownFieldError(collection: string, field: string): FieldError {
  const envelope = (ENVELOPE_KEYS as readonly string[]).includes(field);
  return {
    field,
    message: envelope
      ? `${field} is part of the record envelope, not a field of collection ${collection}`
      : `unknown field ${field} for collection ${collection}`,
  };
}

function issuesToErrors(field: string, error: z.ZodError): FieldError[] {
  return error.issues.map((issue) => ({
    field: [field, ...issue.path.map(String)].join('.'),
    message: issue.message,
  }));
}

function labelOf(collection: CollectionName, field: string): string {
  return (fieldMeta[collection] as Record<string, FieldMeta>)[field]?.label ?? field;
}

/**
 * Validates the changed fields of a push (a partial record): unknown fields are errors, each value
 * is checked by its field's schema, and null clears an optional field.
 */
export function validateFields<C extends CollectionName>(
  collection: C,
  fields: unknown,
): FieldValidation<Partial<RecordFields<C>>>;
export function validateFields(
  collection: string,
  fields: unknown,
): FieldValidation<Record<string, unknown>>;
export function validateFields(
  collection: string,
  fields: unknown,
): FieldValidation<Record<string, unknown>> {
  if (!isCollectionName(collection)) {
    return { ok: false, errors: [{ field: '', message: `unknown collection ${collection}` }] };
  }
  if (!isPlainObject(fields)) {
    return {
      ok: false,
      errors: [{ field: '', message: `fields for collection ${collection} must be an object` }],
    };
  }
  return checkFields(collection, fields, false);
}

/**
 * The check both validations share, in one pass over the given keys (a push checks up to 500
 * records at a time, so nothing is copied first). `full`: an undefined value is an absent key and
 * missing required fields are errors too.
 */
function checkFields(
  collection: CollectionName,
  fields: Record<string, unknown>,
  full: boolean,
): FieldValidation<Record<string, unknown>> {
  const shape = shapeOf(collection);
  const errors: FieldError[] = [];
  const parsed: Record<string, unknown> = {};
  for (const field in fields) {
    if (!Object.hasOwn(fields, field)) continue;
    const value = fields[field];
    if (value === undefined && full) continue;
    const schema = Object.hasOwn(shape, field) ? shape[field] : undefined;
    if (schema === undefined) {
      errors.push(unknownFieldError(collection, field));
      continue;
    }
    if (value === undefined) {
      errors.push({
        field,
        message: `${labelOf(collection, field)} has no value; send null to clear it`,
      });
      continue;
    }
    if (value === null && isRequired(schema)) {
      errors.push({
        field,
        message: `${labelOf(collection, field)} is required and cannot be cleared`,
      });
      continue;
    }
    const result = schema.safeParse(value);
    if (result.success) parsed[field] = result.data;
    else errors.push(...issuesToErrors(field, result.error));
  }
  if (full) {
    for (const field of requiredFields(collection)) {
      if (fields[field] === undefined) {
        errors.push({ field, message: `${labelOf(collection, field)} is required` });
      }
    }
  }
  return errors.length > 0 ? { ok: false, errors } : { ok: true, fields: parsed };
}

/** Validates a full record, as when it is created: lists missing required fields too. */
export function validateRecord<C extends CollectionName>(
  collection: C,
  record: unknown,
): FieldValidation<RecordFields<C>>;
export function validateRecord(
  collection: string,
  record: unknown,
): FieldValidation<Record<string, unknown>>;
export function validateRecord(
  collection: string,
  record: unknown,
): FieldValidation<Record<string, unknown>> {
  if (!isCollectionName(collection)) {
    return { ok: false, errors: [{ field: '', message: `unknown collection ${collection}` }] };
  }
  if (!isPlainObject(record)) {
    return {
      ok: false,
      errors: [{ field: '', message: `a ${collection} record must be an object` }],
    };
  }
  // An undefined value in a full record is the same as an absent key.
  return checkFields(collection, record, true);
}
