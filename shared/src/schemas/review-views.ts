// What the Review desk routes answer (sync-server/src/review), read by the PWA's Review desk
// (pwa/src/screens/review/review-api.ts), and the query of its Disputes list. One declaration
// for both ends.
import { z } from 'zod';
import type { JsonValue } from '../sync/merge';
import { COLLECTIONS, type CollectionName } from './collection-names.schema';

export const DISPUTE_SORTS = ['age', 'patient', 'section', 'site'] as const;
export type DisputeSort = (typeof DISPUTE_SORTS)[number];

/**
 * The query of GET /api/review/disputes. The list is paged by an opaque cursor: the first page
 * is asked for without one, and each page's `next` asks for the page after it with the same
 * filters, sort and direction. Unknown parameters are refused (a tablet from before the cursor
 * sent `page`).
 */
export const disputeQuerySchema = z.strictObject(
  {
    siteId: z.uuid({ error: 'siteId must be a site id (a UUID)' }).optional(),
    patient: z.string().trim().max(200, { error: 'patient: at most 200 characters' }).optional(),
    section: z
      .enum(COLLECTIONS, { error: (issue) => `section: unknown section ${String(issue.input)}` })
      .optional(),
    minAgeHours: z.coerce
      .number<number | string>({ error: 'minAgeHours must be a number of hours' })
      .min(0, { error: 'minAgeHours cannot be negative' })
      .max(24 * 365, { error: 'minAgeHours: at most a year' })
      .optional(),
    sort: z
      .enum(DISPUTE_SORTS, { error: 'sort must be one of: age, patient, section, site' })
      .default('age'),
    direction: z.enum(['asc', 'desc'], { error: 'direction must be asc or desc' }).default('asc'),
    pageSize: z.coerce
      .number<number | string>({ error: 'pageSize must be a number' })
      .int({ error: 'pageSize must be a whole number' })
      .min(1, { error: 'pageSize must be between 1 and 100' })
      .max(100, { error: 'pageSize must be between 1 and 100' })
      .default(25),
    cursor: z
      .string()
      .min(1, { error: 'cursor: leave it out for the first page' })
      .max(2000, { error: 'cursor: not a cursor this server gave out' })
      .optional(),
  },
  {
    error: (issue) =>
      issue.code === 'unrecognized_keys'
        ? `${issue.keys.join(', ')}: not a parameter of the Disputes list (it pages with the cursor in \`next\`; reload the Review desk)`
        : undefined,
  },
);
/** The query as the server reads it (defaults filled in). */
export type DisputeQuery = z.infer<typeof disputeQuerySchema>;

export interface PersonRef {
  id: string;
  name: string;
}

/** A tablet, or `server` for a change made at a desk. */
export interface DeviceRef {
  id: string;
  label: string;
}

export interface DisputeCandidateView {
  value: JsonValue;
  hlc: string;
  version: number;
  by: PersonRef;
  device: DeviceRef;
  /** The HLC's wall time (ISO, UTC). */
  enteredAt: string | null;
  provisional: boolean;
}

export interface DisputeRowView {
  id: string;
  collection: CollectionName;
  recordId: string;
  field: string;
  status: 'open' | 'resolved';
  openedAt: string;
  provisional: JsonValue;
  candidates: DisputeCandidateView[];
  siteId: string | null;
  siteName: string | null;
  timeZone: string;
  patientId: string | null;
  patientName: string | null;
  visitId: string | null;
  visitDate: string | null;
  signedVisit: boolean;
}

export interface ContextRecordView {
  collection: CollectionName;
  id: string;
  version: number;
  fields: Record<string, JsonValue>;
}

export interface DisputeDetailView extends DisputeRowView {
  record: ContextRecordView;
  related: ContextRecordView[];
}

export interface DisputePageView {
  items: DisputeRowView[];
  /** Disputes matching the filters, counted in full. */
  total: number;
  /** The number of this page, from 1 (the cursor carries it). */
  page: number;
  pageSize: number;
  /** The cursor of the page after this one, or null on the last page. */
  next: string | null;
  /** Open disputes in the supervisor's sites, whatever the filters. */
  openTotal: number;
  facets: { sites: { id: string; name: string }[]; sections: string[] };
}

export interface CountersignItemView {
  visitId: string;
  version: number;
  siteId: string;
  siteName: string | null;
  timeZone: string;
  date: string;
  reason: string | null;
  patient: { id: string; name: string | null; dateOfBirth: string | null };
  clinician: PersonRef;
  signedBy: PersonRef | null;
  signedAt: string | null;
  returnedComment: string | null;
  openDisputes: number;
  sections: ContextRecordView[];
}

export type HistoryKind =
  | 'value'
  | 'dispute-opened'
  | 'dispute-resolved'
  | 'addendum'
  | 'signed'
  | 'countersigned'
  | 'returned';

export interface HistoryEntryView {
  kind: HistoryKind;
  at: string;
  field: string | null;
  value?: JsonValue;
  previousValue?: JsonValue;
  by: PersonRef | null;
  device: DeviceRef | null;
  hlc: string | null;
  version: number | null;
  note: string | null;
  conflictId: string | null;
}

export interface RecordHistoryView {
  collection: CollectionName;
  recordId: string;
  siteId: string | null;
  timeZone: string;
  current: ContextRecordView & { deleted: boolean };
  entries: HistoryEntryView[];
}

export interface VisitReviewResult {
  visitId: string;
  version: number;
  status: 'countersigned' | 'draft';
  fields: Record<string, JsonValue>;
}

export interface ReviewSummary {
  openDisputes: number;
  awaitingCountersign: number;
}
