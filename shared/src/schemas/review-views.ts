// What the Review desk routes answer (sync-server/src/review), read by the PWA's Review desk
// (pwa/src/screens/review/review-api.ts). One declaration for both ends.
import type { JsonValue } from '../sync/merge';
import type { CollectionName } from './collection-names.schema';

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
  total: number;
  page: number;
  pageSize: number;
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
