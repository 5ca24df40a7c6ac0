// The Review desk's calls to the clinic server: the disputes list and resolve route of the
// conflicts module, and the review module's countersign, return and record history routes.
// Sent through the tablet's one API client (net/api-client.ts), so refusals read as everywhere
// else; the fetch and the access token are injected so component tests can stand in for the network.
import type { DisputeQuery, DisputeSort, ResolveConflictRequest } from '@fuselight/shared';
import { ApiClient, type FetchLike } from '../../net/api-client';

// The desk's answers are declared once, in @fuselight/shared (schemas/review-views.ts).
import type {
  PersonRef,
  DeviceRef,
  DisputeCandidateView as DisputeCandidate,
  DisputeRowView as DisputeRow,
  DisputePageView as DisputePage,
  ContextRecordView as ContextRecord,
  DisputeDetailView as DisputeDetail,
  ReviewSummary,
  CountersignItemView as CountersignItem,
  HistoryKind,
  HistoryEntryView as HistoryEntry,
  RecordHistoryView as RecordHistory,
} from '@fuselight/shared';
export type {
  PersonRef,
  DeviceRef,
  DisputeCandidate,
  DisputeRow,
  DisputePage,
  ContextRecord,
  DisputeDetail,
  ReviewSummary,
  CountersignItem,
  HistoryKind,
  HistoryEntry,
  RecordHistory,
};

/** The Disputes list's query (its schema, disputeQuerySchema, is shared with the server). */
export type { DisputeQuery, DisputeSort };

export type { FetchLike } from '../../net/api-client';

/** A refusal or no answer from the clinic server, in words (the tablet's one wording). */
export { ApiError as ReviewApiError } from '../../net/api-client';

function queryString(query: object): string {
  const params = new URLSearchParams();
  for (const [key, value] of Object.entries(query)) {
    if (value !== undefined && value !== null && value !== '') params.set(key, String(value));
  }
  const text = params.toString();
  return text ? `?${text}` : '';
}

export interface ReviewApiOptions {
  fetch: FetchLike;
  /** The signed-in supervisor's access token, or null when nobody is signed in. */
  accessToken: () => Promise<string | null> | string | null;
  baseUrl?: string;
}

export class ReviewApi {
  private readonly client: ApiClient;

  constructor(private readonly options: ReviewApiOptions) {
    this.client = new ApiClient({
      fetch: options.fetch,
      ...(options.baseUrl === undefined ? {} : { baseUrl: options.baseUrl }),
    });
  }

  private async send(method: string, path: string, body?: unknown): Promise<Response> {
    const token = await this.options.accessToken();
    return this.client.send(method, path, { token, ...(body === undefined ? {} : { body }) });
  }

  private async json<T>(method: string, path: string, body?: unknown): Promise<T> {
    const response = await this.send(method, path, body);
    return (await response.json()) as T;
  }

  summary(): Promise<ReviewSummary> {
    return this.json('GET', '/api/review/summary');
  }

  disputes(query: DisputeQuery): Promise<DisputePage> {
    return this.json('GET', `/api/review/disputes${queryString(query)}`);
  }

  dispute(id: string): Promise<DisputeDetail> {
    return this.json('GET', `/api/review/disputes/${encodeURIComponent(id)}`);
  }

  /** The conflicts module's resolve route; the review module records an Addendum when needed. */
  resolve(id: string, request: ResolveConflictRequest): Promise<unknown> {
    return this.json('POST', `/api/conflicts/${encodeURIComponent(id)}/resolve`, request);
  }

  countersignQueue(): Promise<{ items: CountersignItem[] }> {
    return this.json('GET', '/api/review/countersign');
  }

  countersign(visitId: string): Promise<unknown> {
    return this.json('POST', `/api/review/visits/${encodeURIComponent(visitId)}/countersign`, {});
  }

  returnVisit(visitId: string, comment: string): Promise<unknown> {
    return this.json('POST', `/api/review/visits/${encodeURIComponent(visitId)}/return`, {
      comment,
    });
  }

  history(collection: string, recordId: string): Promise<RecordHistory> {
    return this.json(
      'GET',
      `/api/review/records/${encodeURIComponent(collection)}/${encodeURIComponent(recordId)}/history`,
    );
  }

  async historyCsv(collection: string, recordId: string): Promise<string> {
    const response = await this.send(
      'GET',
      `/api/review/records/${encodeURIComponent(collection)}/${encodeURIComponent(recordId)}/history.csv`,
    );
    return response.text();
  }
}
