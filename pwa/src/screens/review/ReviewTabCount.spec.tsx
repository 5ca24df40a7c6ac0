import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { act, cleanup, render, screen, waitFor } from '@testing-library/react';
import { afterEach, describe, expect, it } from 'vitest';
import { ReviewApi, type ReviewSummary } from './review-api';
import { ReviewTabCount, tabCount } from './ReviewTabCount';

function setOnline(online: boolean) {
  Object.defineProperty(navigator, 'onLine', { configurable: true, get: () => online });
  window.dispatchEvent(new Event(online ? 'online' : 'offline'));
}

afterEach(() => {
  cleanup();
  setOnline(true);
});

/** A stand-in server for GET /api/review/summary that can answer, fail, or be unreachable. */
function summaryServer(initial: ReviewSummary) {
  const state = { summary: initial, answer: 'ok' as 'ok' | 'error' | 'unreachable', calls: 0 };
  const api = new ReviewApi({
    accessToken: () => 'token',
    fetch: async (input) => {
      state.calls += 1;
      if (new URL(input, 'http://clinic.test').pathname !== '/api/review/summary')
        return new Response('{}', { status: 404 });
      if (state.answer === 'unreachable') throw new TypeError('Failed to fetch');
      if (state.answer === 'error') return new Response('{"message":"down"}', { status: 503 });
      return new Response(JSON.stringify(state.summary), { status: 200 });
    },
  });
  return { api, state };
}

function renderBadge(api: ReviewApi) {
  const client = new QueryClient();
  render(
    <QueryClientProvider client={client}>
      <ReviewTabCount api={api} />
    </QueryClientProvider>,
  );
  return client;
}

describe('the Review desk tab count', () => {
  it('adds open Disputes and visits to countersign, and shows nothing when none wait', () => {
    const online = { online: true, failed: false };
    expect(tabCount({ openDisputes: 2, awaitingCountersign: 3 }, online)).toBe(5);
    expect(tabCount({ openDisputes: 0, awaitingCountersign: 0 }, online)).toBeNull();
    expect(tabCount(undefined, online)).toBeNull();
    expect(
      tabCount({ openDisputes: 2, awaitingCountersign: 3 }, { online: false, failed: false }),
    ).toBeNull();
    expect(
      tabCount({ openDisputes: 2, awaitingCountersign: 3 }, { online: true, failed: true }),
    ).toBeNull();
  });

  it('shows the server’s count, and hides it as soon as the tablet goes offline', async () => {
    const { api } = summaryServer({ openDisputes: 2, awaitingCountersign: 1 });
    renderBadge(api);
    const badge = await screen.findByLabelText('2 open Disputes, 1 visit to countersign');
    expect(badge.textContent).toBe('3');
    act(() => setOnline(false));
    await waitFor(() => expect(screen.queryByText('3')).toBeNull());
  });

  it('asks nothing offline and shows the fresh count once back online', async () => {
    setOnline(false);
    const { api, state } = summaryServer({ openDisputes: 4, awaitingCountersign: 0 });
    renderBadge(api);
    await new Promise((resolve) => setTimeout(resolve, 20));
    expect(state.calls).toBe(0);
    expect(screen.queryByText('4')).toBeNull();
    act(() => setOnline(true));
    expect(
      (await screen.findByLabelText('4 open Disputes, 0 visits to countersign')).textContent,
    ).toBe('4');
  });

  it('drops a number it can no longer confirm when the server stops answering', async () => {
    const { api, state } = summaryServer({ openDisputes: 1, awaitingCountersign: 0 });
    const client = renderBadge(api);
    await screen.findByText('1');
    state.answer = 'error';
    await act(() => client.refetchQueries());
    await waitFor(() => expect(screen.queryByText('1')).toBeNull());
    state.answer = 'ok';
    state.summary = { openDisputes: 1, awaitingCountersign: 2 };
    await act(() => client.refetchQueries());
    expect(
      (await screen.findByLabelText('1 open Dispute, 2 visits to countersign')).textContent,
    ).toBe('3');
  });
});
