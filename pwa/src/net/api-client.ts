// The tablet's one client for the clinic server's routes (identity, admin and Fleet, the Review
// desk; the sync engine keeps its own transport). It sends JSON with the person's access token,
// gives up after a time-out, and turns every failure into one wording a person can act on:
// what the server said when it said something a person can read, otherwise what the status
// means and what to do next. The fetch is injected so tests can stand in for the network.

export type FetchLike = (input: string, init?: RequestInit) => Promise<Response>;

/** How long a call may take before the tablet stops waiting for the answer. */
export const DEFAULT_TIMEOUT_MS = 20_000;

/** The clinic server answered and refused (any status that is not 2xx). */
export class ApiError extends Error {
  constructor(
    readonly status: number,
    message: string,
    /** The server told this tablet to erase its data (it was revoked). */
    readonly erase: boolean,
    readonly body: unknown,
  ) {
    super(message);
    this.name = 'ApiError';
  }
}

/** No answer at all: offline, the server down or unreachable, or no answer in time. */
export class NetworkError extends Error {
  readonly status = 0;
  constructor(
    readonly reason: 'offline' | 'timeout',
    cause?: unknown,
  ) {
    super(reason === 'timeout' ? TIMEOUT_WORDS : OFFLINE_WORDS, { cause });
    this.name = 'NetworkError';
  }
}

export const OFFLINE_WORDS =
  'The clinic server could not be reached; check the network and try again.';
export const TIMEOUT_WORDS =
  'The clinic server did not answer in time; check the network and try again.';

/** Reason phrases a server sends when it has nothing more to say: the status words say more. */
const BARE_REASONS = new Set(
  [
    'bad request',
    'unauthorized',
    'forbidden',
    'not found',
    'conflict',
    'too many requests',
    'payload too large',
    'internal server error',
    'service unavailable',
    'bad gateway',
    'gateway timeout',
  ].map((reason) => reason.toLowerCase()),
);

/** What a refusal means, by status, and what the person can do about it. */
export function statusWords(status: number): string {
  if (status === 401) return 'Your session has ended; sign in again.';
  if (status === 403) return 'Your role does not allow this; ask a clinic admin if you need it.';
  if (status === 404) return 'The clinic server does not have this (it may have been removed).';
  if (status === 409) return 'This was changed elsewhere meanwhile; reload it and try again.';
  if (status === 413) return 'This is too large for the clinic server to take.';
  if (status === 429) return 'The clinic server is busy; wait a moment and try again.';
  if (status >= 500) return 'The clinic server had a problem; try again shortly.';
  return `The clinic server refused the request (status ${status}).`;
}

/** The server's own `message` (a string, or a list of them), when it is words a person can use. */
export function serverMessage(body: unknown): string | null {
  if (!body || typeof body !== 'object' || !('message' in body)) return null;
  const { message } = body as { message: unknown };
  const text = Array.isArray(message)
    ? message.filter((m): m is string => typeof m === 'string' && m !== '').join('; ')
    : typeof message === 'string'
      ? message
      : '';
  const trimmed = text.trim();
  if (trimmed === '' || BARE_REASONS.has(trimmed.toLowerCase())) return null;
  return trimmed;
}

/**
 * The words for a refusal: the server's message for a refusal it explains (bad input names the
 * field, a wrong password says so), the status's words for a server fault or a bare refusal.
 */
export function errorWording(status: number, body: unknown): string {
  if (status === 0) return OFFLINE_WORDS;
  const message = status < 500 ? serverMessage(body) : null;
  return message ?? statusWords(status);
}

async function readBody(response: Response): Promise<unknown> {
  const text = await response.text();
  if (!text) return null;
  try {
    return JSON.parse(text) as unknown;
  } catch {
    return text;
  }
}

export interface ApiClientOptions {
  fetch?: FetchLike;
  /** Prefix of every route; '' means the page's own origin. */
  baseUrl?: string;
  timeoutMs?: number;
}

export interface RequestOptions {
  body?: unknown;
  /** The access token to send, if any. */
  token?: string | null;
}

export class ApiClient {
  private readonly fetcher: FetchLike;
  private readonly baseUrl: string;
  private readonly timeoutMs: number;

  constructor(options: ApiClientOptions = {}) {
    this.fetcher = options.fetch ?? ((input, init) => globalThis.fetch(input, init));
    this.baseUrl = options.baseUrl ?? '';
    this.timeoutMs = options.timeoutMs ?? DEFAULT_TIMEOUT_MS;
  }

  /** The answer as the raw response (read it as text, a blob…); refusals are thrown. */
  async send(method: string, path: string, options: RequestOptions = {}): Promise<Response> {
    const headers: Record<string, string> = { accept: 'application/json' };
    if (options.body !== undefined) headers['content-type'] = 'application/json';
    if (options.token) headers.authorization = `Bearer ${options.token}`;
    const controller = new AbortController();
    let timedOut = false;
    const timer = setTimeout(() => {
      timedOut = true;
      controller.abort();
    }, this.timeoutMs);
    let response: Response;
    try {
      response = await this.fetcher(`${this.baseUrl}${path}`, {
        method,
        headers,
        ...(options.body === undefined ? {} : { body: JSON.stringify(options.body) }),
        cache: 'no-store',
        signal: controller.signal,
      });
    } catch (error) {
      throw new NetworkError(timedOut ? 'timeout' : 'offline', error);
    } finally {
      clearTimeout(timer);
    }
    if (!response.ok) {
      const body = await readBody(response);
      const erase =
        response.status === 401 &&
        !!body &&
        typeof body === 'object' &&
        (body as { erase?: unknown }).erase === true;
      throw new ApiError(response.status, errorWording(response.status, body), erase, body);
    }
    return response;
  }

  /** The answer's JSON body (null when it has none). */
  async request<T>(method: string, path: string, options: RequestOptions = {}): Promise<T> {
    return (await readBody(await this.send(method, path, options))) as T;
  }
}
