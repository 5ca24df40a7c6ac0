import { describe, expect, it } from 'vitest';
import {
  ApiClient,
  ApiError,
  NetworkError,
  OFFLINE_WORDS,
  TIMEOUT_WORDS,
  errorWording,
  type FetchLike,
} from './api-client';

const answer =
  (status: number, body: unknown): FetchLike =>
  () =>
    Promise.resolve(
      new Response(typeof body === 'string' ? body : JSON.stringify(body), { status }),
    );

async function failure(client: ApiClient): Promise<unknown> {
  try {
    await client.request('GET', '/api/anything');
  } catch (error) {
    return error;
  }
  throw new Error('the call did not fail');
}

describe('the API client’s error wording', () => {
  it('shows the server’s own message for a refusal it explains, naming the field', async () => {
    const error = await failure(
      new ApiClient({
        fetch: answer(400, { statusCode: 400, message: 'body.email: Invalid email address' }),
      }),
    );
    expect(error).toBeInstanceOf(ApiError);
    expect((error as ApiError).status).toBe(400);
    expect((error as ApiError).message).toBe('body.email: Invalid email address');
  });

  it('joins a list of messages into one sentence', () => {
    expect(errorWording(400, { message: ['name: Required', 'kind: Invalid option'] })).toBe(
      'name: Required; kind: Invalid option',
    );
  });

  it('says what a bare refusal means and what to do, by status', () => {
    expect(errorWording(401, { statusCode: 401, message: 'Unauthorized' })).toBe(
      'Your session has ended; sign in again.',
    );
    expect(errorWording(403, { message: 'Forbidden' })).toBe(
      'Your role does not allow this; ask a clinic admin if you need it.',
    );
    expect(errorWording(404, null)).toBe(
      'The clinic server does not have this (it may have been removed).',
    );
    expect(errorWording(409, '')).toBe(
      'This was changed elsewhere meanwhile; reload it and try again.',
    );
    expect(errorWording(429, { message: '' })).toBe(
      'The clinic server is busy; wait a moment and try again.',
    );
    expect(errorWording(418, 'not json')).toBe(
      'The clinic server refused the request (status 418).',
    );
  });

  it('never shows a server fault’s internals: a 5xx reads as a problem to retry', async () => {
    const error = await failure(
      new ApiClient({
        fetch: answer(500, { message: 'relation "sync_record" does not exist' }),
      }),
    );
    expect((error as ApiError).message).toBe('The clinic server had a problem; try again shortly.');
    expect(errorWording(503, 'Service Unavailable')).toBe(
      'The clinic server had a problem; try again shortly.',
    );
  });

  it('keeps the server’s erase flag on a revoked tablet’s refusal', async () => {
    const error = (await failure(
      new ApiClient({
        fetch: answer(401, { message: 'This tablet has been revoked.', erase: true }),
      }),
    )) as ApiError;
    expect(error.erase).toBe(true);
    expect(error.message).toBe('This tablet has been revoked.');
    const plain = (await failure(
      new ApiClient({ fetch: answer(401, { erase: true }) }),
    )) as ApiError;
    expect(plain.erase).toBe(true);
    const forbidden = (await failure(
      new ApiClient({ fetch: answer(403, { erase: true }) }),
    )) as ApiError;
    expect(forbidden.erase).toBe(false);
  });

  it('says the server could not be reached when there is no answer at all', async () => {
    const error = await failure(
      new ApiClient({ fetch: () => Promise.reject(new TypeError('Failed to fetch')) }),
    );
    expect(error).toBeInstanceOf(NetworkError);
    expect((error as NetworkError).reason).toBe('offline');
    expect((error as NetworkError).message).toBe(OFFLINE_WORDS);
    expect(errorWording(0, null)).toBe(OFFLINE_WORDS);
  });

  it('stops waiting after the time-out and says so', async () => {
    const hanging: FetchLike = (_input, init) =>
      new Promise((_resolve, reject) => {
        init?.signal?.addEventListener('abort', () =>
          reject(new DOMException('aborted', 'AbortError')),
        );
      });
    const error = await failure(new ApiClient({ fetch: hanging, timeoutMs: 20 }));
    expect(error).toBeInstanceOf(NetworkError);
    expect((error as NetworkError).reason).toBe('timeout');
    expect((error as NetworkError).message).toBe(TIMEOUT_WORDS);
  });

  it('sends JSON with the token and reads the JSON answer', async () => {
    let seen: { url: string; init: RequestInit | undefined } | null = null;
    const client = new ApiClient({
      baseUrl: 'https://clinic.invalid',
      fetch: (url, init) => {
        seen = { url, init };
        return Promise.resolve(new Response(JSON.stringify({ ok: 1 }), { status: 200 }));
      },
    });
    expect(await client.request('POST', '/api/x', { token: 't0k', body: { a: 1 } })).toEqual({
      ok: 1,
    });
    const sent = seen as unknown as { url: string; init: RequestInit };
    expect(sent.url).toBe('https://clinic.invalid/api/x');
    expect(sent.init.body).toBe('{"a":1}');
    expect((sent.init.headers as Record<string, string>).authorization).toBe('Bearer t0k');
  });
});
