// Wire format of sync protocol v1 (docs/sync-protocol.md): push, pull and conflict resolution.
//
// Two strengths of push schema, because the protocol treats problems differently:
// - `pushRequestShapeSchema` decides the 400: a body that is not this shape, or a change without
//   a usable changeId, refuses the whole request.
// - `pushChangeSchema` (strict: known collection, uuid record id, stamp format) decides a single
//   change's `rejected`; the server checks each change with it and with `validateFields`, and
//   still applies the others.
// `pushRequestSchema` is the strict whole, for clients checking what they send and for tests.
import { z } from 'zod';
import { COLLECTIONS } from './registry';

export const PROTOCOL_VERSION = 1;
export const MAX_CHANGES_PER_PUSH = 500;
export const MAX_PULL_LIMIT = 1000;
export const DEFAULT_PULL_LIMIT = 500;

/** `<wall ms, 15 digits>-<counter, 5 digits>-<device id>`; compares as a string. */
export const HLC_STAMP_PATTERN = /^\d{15}-\d{5}-.+$/;

export const hlcStampSchema = z.string({ error: 'hlc must be a string' }).regex(HLC_STAMP_PATTERN, {
  error: 'hlc must be a stamp <15-digit wall ms>-<5-digit counter>-<device id>',
});

/** A server version: one counter for the whole server, also the pull cursor. */
export const versionSchema = z.int({ error: 'version must be a whole number' }).min(0, {
  error: 'version cannot be negative',
});

export const collectionNameSchema = z.enum(COLLECTIONS, {
  error: (issue) => `unknown collection ${String(issue.input)}`,
});

/** Any JSON value a field may hold. */
export const fieldValueSchema = z.json({ error: 'a field value must be JSON' });
export const fieldMapSchema = z.record(z.string(), fieldValueSchema, {
  error: 'fields must be an object',
});

export const pushChangeSchema = z.object({
  changeId: z.uuid({ error: 'changeId must be a UUID' }),
  collection: collectionNameSchema,
  recordId: z.uuid({ error: 'recordId must be a UUID' }),
  baseVersion: z.int({ error: 'baseVersion must be a whole number' }).min(0, {
    error: 'baseVersion cannot be negative',
  }),
  hlc: hlcStampSchema,
  fields: fieldMapSchema,
  deleted: z.boolean({ error: 'deleted must be true or false' }).optional(),
});
export type PushChange = z.infer<typeof pushChangeSchema>;

/**
 * `pushChangeSchema` for a change that was read from JSON (the server's request body): every
 * value is JSON already, so the fields are only required to be an object, and each value is then
 * checked by its field's own schema (`validateFields`). Walking every value once more as JSON
 * cost the server about a third of this check.
 */
export const pushChangeFromJsonSchema = pushChangeSchema.extend({
  fields: z.record(z.string(), z.unknown(), { error: 'fields must be an object' }),
});

const pushEnvelopeShape = {
  protocol: z.literal(PROTOCOL_VERSION, { error: `protocol must be ${PROTOCOL_VERSION}` }),
  schemaVersion: z.int({ error: 'schemaVersion must be a whole number' }).min(0, {
    error: 'schemaVersion cannot be negative',
  }),
};

const changesLimit = {
  error: `a push carries at most ${MAX_CHANGES_PER_PUSH} changes`,
};

export const pushRequestSchema = z.object({
  ...pushEnvelopeShape,
  changes: z
    .array(pushChangeSchema, { error: 'changes must be a list' })
    .max(MAX_CHANGES_PER_PUSH, changesLimit),
});
export type PushRequest = z.infer<typeof pushRequestSchema>;

/** Only what makes a push well-formed (see the top of this file); each change is checked after. */
export const pushChangeShapeSchema = z.looseObject({
  changeId: z.uuid({ error: 'changeId must be a UUID' }),
});
export const pushRequestShapeSchema = z.object({
  ...pushEnvelopeShape,
  changes: z
    .array(pushChangeShapeSchema, { error: 'changes must be a list' })
    .max(MAX_CHANGES_PER_PUSH, changesLimit),
});
export type PushRequestShape = z.infer<typeof pushRequestShapeSchema>;

export const PUSH_STATUSES = ['applied', 'merged', 'conflict', 'rejected'] as const;
export type PushStatus = (typeof PUSH_STATUSES)[number];

const acceptedResultSchema = z.object({
  changeId: z.uuid(),
  status: z.enum(['applied', 'merged', 'conflict']),
  version: versionSchema,
  /** Field names that opened (or joined) a conflict; empty unless status is `conflict`. */
  conflicts: z.array(z.string()),
  replayed: z.boolean().optional(),
});
const rejectedResultSchema = z.object({
  changeId: z.uuid(),
  status: z.literal('rejected'),
  /** Why, in words a person can act on. */
  error: z.string().min(1),
  replayed: z.boolean().optional(),
});
export const pushResultSchema = z.discriminatedUnion('status', [
  acceptedResultSchema,
  rejectedResultSchema,
]);
export type PushResult = z.infer<typeof pushResultSchema>;
export type AcceptedPushResult = z.infer<typeof acceptedResultSchema>;
export type RejectedPushResult = z.infer<typeof rejectedResultSchema>;

export const pushResponseSchema = z.object({
  results: z.array(pushResultSchema),
  serverTime: z.iso.datetime(),
});
export type PushResponse = z.infer<typeof pushResponseSchema>;

/** Query of GET /api/sync/pull; strings from the URL are coerced. */
export const pullQuerySchema = z.object({
  after: z.coerce
    .number({ error: 'after must be a version number' })
    .pipe(versionSchema)
    .default(0),
  limit: z.coerce
    .number({ error: 'limit must be a number' })
    .pipe(
      z
        .int({ error: 'limit must be a whole number' })
        .min(1, { error: `limit must be between 1 and ${MAX_PULL_LIMIT}` })
        .max(MAX_PULL_LIMIT, { error: `limit must be between 1 and ${MAX_PULL_LIMIT}` }),
    )
    .default(DEFAULT_PULL_LIMIT),
});
export type PullQuery = z.infer<typeof pullQuerySchema>;

export const fieldStampSchema = z.object({
  hlc: hlcStampSchema,
  version: versionSchema,
  /** User id. */
  by: z.string().min(1),
  /** Device id, or `server` for a resolution made at a desk. */
  device: z.string().min(1),
});
export type FieldStamp = z.infer<typeof fieldStampSchema>;

export const pulledRecordSchema = z.object({
  collection: collectionNameSchema,
  id: z.uuid(),
  version: versionSchema,
  deleted: z.boolean(),
  fields: fieldMapSchema,
  stamps: z.record(z.string(), fieldStampSchema),
  /** Fields of this record with an open conflict. */
  conflicts: z.array(z.string()),
});
export type PulledRecord = z.infer<typeof pulledRecordSchema>;

export const pullPageSchema = z.object({
  records: z.array(pulledRecordSchema),
  cursor: versionSchema,
  more: z.boolean(),
});
export type PullPage = z.infer<typeof pullPageSchema>;

/**
 * Pull again from 0, keeping the Outbox and local edits: the device's cursor is behind the
 * tombstone horizon (`horizon`), was handed out before the server's cursor epoch, when pages
 * could skip records (`cursor-epoch`), or is above what a restore from a backup kept
 * (`restored`). Servers before the epoch send no reason. A reason a device does not know is
 * still a reset (a later server may add reasons): the schema takes any text.
 */
export const PULL_RESET_REASONS = ['horizon', 'cursor-epoch', 'restored'] as const;
export type PullResetReason = (typeof PULL_RESET_REASONS)[number];
export const pullResetSchema = z.object({
  reset: z.literal(true),
  reason: z.string().max(100).optional(),
});
export type PullReset = z.infer<typeof pullResetSchema>;

export const pullResponseSchema = z.union([pullPageSchema, pullResetSchema]);
export type PullResponse = z.infer<typeof pullResponseSchema>;

export function isPullReset(response: PullResponse): response is PullReset {
  return 'reset' in response;
}

export const conflictCandidateSchema = z.object({
  value: fieldValueSchema,
  hlc: hlcStampSchema,
  by: z.string().min(1),
  device: z.string().min(1),
  version: versionSchema,
});
export type ConflictCandidate = z.infer<typeof conflictCandidateSchema>;

export const CONFLICT_STATUSES = ['open', 'resolved'] as const;
export type ConflictStatus = (typeof CONFLICT_STATUSES)[number];

export const conflictSchema = z.object({
  id: z.string().min(1),
  collection: collectionNameSchema,
  recordId: z.uuid(),
  field: z.string().min(1),
  status: z.enum(CONFLICT_STATUSES),
  openedAt: z.iso.datetime(),
  provisional: fieldValueSchema,
  candidates: z.array(conflictCandidateSchema),
  resolvedAt: z.iso.datetime().nullish(),
  resolvedBy: z.string().nullish(),
  resolvedValue: fieldValueSchema.optional(),
  note: z.string().nullish(),
});
export type ConflictItem = z.infer<typeof conflictSchema>;

export const conflictListQuerySchema = z.object({
  status: z.enum(CONFLICT_STATUSES).optional(),
  recordId: z.uuid({ error: 'recordId must be a UUID' }).optional(),
  cursor: z.string().min(1).optional(),
});
export type ConflictListQuery = z.infer<typeof conflictListQuerySchema>;

export const conflictListResponseSchema = z.object({
  items: z.array(conflictSchema),
  /** Opaque cursor of the next page; null at the end. */
  next: z.string().nullable(),
});
export type ConflictListResponse = z.infer<typeof conflictListResponseSchema>;

export const resolveConflictRequestSchema = z.object({
  value: fieldValueSchema,
  note: z
    .string({ error: 'A note saying why is required' })
    .trim()
    .min(1, { error: 'A note saying why is required' })
    .max(2000, { error: 'The note must be at most 2000 characters' }),
});
export type ResolveConflictRequest = z.infer<typeof resolveConflictRequestSchema>;
