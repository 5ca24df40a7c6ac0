// The Review desk's calls to the clinic server: the disputes list and resolve route of the
// conflicts module, and the review module's countersign, return and record history routes.
// The fetch and the access token are injected so component tests can stand in for the network.
import type { ResolveConflictRequest } from '@fuselight/shared';

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

export type FetchLike = (input: string, init?: RequestInit) => Promise<Response>;

export type DisputeSort = 'age' | 'patient' | 'section' | 'site';

export interface DisputeQuery {
  siteId?: string;
  patient?: string;
  section?: string;
  /** Only disputes open at least this many hours. */
  minAgeHours?: number;
  sort?: DisputeSort;
  direction?: 'asc' | 'desc';
  page?: number;
  pageSize?: number;
}

export class ReviewApiError extends Error {
  constructor(
    readonly status: number,
    message: string,
  ) {
    super(message);
    this.name = 'ReviewApiError';
  }
}

async function messageOf(response: Response): Promise<string> {
  const text = await response.text();
  try {
    const body = JSON.parse(text) as { message?: unknown };
    if (typeof body.message === 'string' && body.message) return body.message;
  } catch {
    // not JSON: fall through to the status words
  }
  if (response.status === 401) return 'Your session has ended; sign in again.';
  if (response.status === 403) return 'The Review desk is for supervisors.';
  if (response.status >= 500) return 'The clinic server had a problem; try again shortly.';
  return `The server refused the request (${response.status}).`;
}

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
  constructor(private readonly options: ReviewApiOptions) {}

  private async send(method: string, path: string, body?: unknown): Promise<Response> {
    const token = await this.options.accessToken();
    const headers: Record<string, string> = { accept: 'application/json' };
    if (token) headers.authorization = `Bearer ${token}`;
    if (body !== undefined) headers['content-type'] = 'application/json';
    let response: Response;
    try {
      response = await this.options.fetch(`${this.options.baseUrl ?? ''}${path}`, {
        method,
        headers,
        ...(body === undefined ? {} : { body: JSON.stringify(body) }),
      });
    } catch {
      throw new ReviewApiError(
        0,
        'The clinic server could not be reached; the Review desk needs the network.',
      );
    }
    if (!response.ok) throw new ReviewApiError(response.status, await messageOf(response));
    return response;
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

/** One query-key factory for the desk (docs/conventions.md, boundary 3). */
export const reviewKeys = {
  all: ['review'] as const,
  summary: () => [...reviewKeys.all, 'summary'] as const,
  disputes: (query: DisputeQuery) => [...reviewKeys.all, 'disputes', query] as const,
  dispute: (id: string) => [...reviewKeys.all, 'dispute', id] as const,
  countersign: () => [...reviewKeys.all, 'countersign'] as const,
  history: (collection: string, recordId: string) =>
    [...reviewKeys.all, 'history', collection, recordId] as const,
};
