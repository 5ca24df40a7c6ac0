import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { cleanup, render, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import type { ReactNode } from 'react';
import { afterEach, describe, expect, it } from 'vitest';
import { SessionContext } from '../../auth/session-context';
import { classifyForBulk } from './bulk-resolution';
import { angleDispute } from './review-fixtures';
import { ReviewApi, type DisputePage, type DisputeRow } from './review-api';
import ReviewDeskScreen, { ReviewDesk } from './ReviewDeskScreen';

afterEach(cleanup);

function textDispute(id: string, values: [string, string]): DisputeRow {
  const base = angleDispute();
  return {
    ...base,
    id,
    collection: 'amblyoscopeSetup',
    field: 'extraLensesRight',
    provisional: values[1],
    candidates: base.candidates.map((c, i) => ({ ...c, value: values[i] ?? null })),
  };
}

/** A stand-in clinic server: answers the desk's routes and records what was resolved. */
function fakeServer(items: DisputeRow[]) {
  const resolved: { id: string; body: unknown }[] = [];
  const requests: URLSearchParams[] = [];
  const fetch = async (input: string, init?: RequestInit): Promise<Response> => {
    const url = new URL(input, 'http://clinic.test');
    const json = (body: unknown, status = 200) =>
      new Response(JSON.stringify(body), {
        status,
        headers: { 'content-type': 'application/json' },
      });
    if (url.pathname === '/api/review/summary')
      return json({ openDisputes: items.length - resolved.length, awaitingCountersign: 0 });
    if (url.pathname === '/api/review/disputes') {
      requests.push(url.searchParams);
      const open = items.filter((i) => !resolved.some((r) => r.id === i.id));
      // Pages like the server: `next` is an opaque cursor (here the start of the next page).
      const pageSize = Number(url.searchParams.get('pageSize') ?? 25);
      const cursor = url.searchParams.get('cursor');
      const start = cursor ? Number(cursor.replace('after:', '')) : 0;
      const page: DisputePage = {
        items: open.slice(start, start + pageSize),
        total: open.length,
        page: start / pageSize + 1,
        pageSize,
        next: start + pageSize < open.length ? `after:${start + pageSize}` : null,
        openTotal: open.length,
        facets: {
          sites: [{ id: open[0]?.siteId ?? 's', name: 'Harbour Street Clinic' }],
          sections: [],
        },
      };
      return json(page);
    }
    const resolve = /^\/api\/conflicts\/([^/]+)\/resolve$/.exec(url.pathname);
    if (resolve && init?.method === 'POST') {
      resolved.push({ id: resolve[1]!, body: JSON.parse(String(init.body)) });
      return json({ status: 'resolved' });
    }
    return json({ message: 'not found' }, 404);
  };
  return { api: new ReviewApi({ fetch, accessToken: () => 'token' }), resolved, requests };
}

function wrap(node: ReactNode) {
  const client = new QueryClient({ defaultOptions: { queries: { retry: false } } });
  return <QueryClientProvider client={client}>{node}</QueryClientProvider>;
}

describe('the Review desk', () => {
  it('lists disputes with values in the clinician’s words and counts on the tab', async () => {
    const { api } = fakeServer([angleDispute()]);
    render(wrap(<ReviewDesk api={api} />));
    const table = await screen.findByRole('table');
    const [, row] = within(table).getAllByRole('row');
    const cells = within(row!)
      .getAllByRole('cell')
      .map((cell) => cell.textContent);
    expect(cells.slice(1, 3)).toEqual([
      'Amblyoscope angles: Objective horizontal angle',
      'eso 12.0° (21.3Δ) / exo 8.0° (14.1Δ)',
    ]);
    await waitFor(() =>
      expect(
        within(screen.getByRole('group', { name: 'Review desk sections' }))
          .getAllByRole('button')
          .map((b) => [b.textContent, b.getAttribute('aria-pressed')]),
      ).toEqual([
        ['Disputes (1)', 'true'],
        ['Countersign (0)', 'false'],
        ['Record history', 'false'],
      ]),
    );
  });

  it('offers bulk resolution only for formatting-only disputes, with a preview of each before sending', async () => {
    const user = userEvent.setup();
    const formatting = textDispute('c-fmt', ['+1.00 DS', '+1.00 ds']);
    const real = textDispute('c-real', ['+1.00 DS', '+2.00 DS']);
    const { api, resolved } = fakeServer([formatting, real, angleDispute()]);
    expect(classifyForBulk(formatting)).toBe('formatting only');
    expect(classifyForBulk(real)).toBeNull();
    render(wrap(<ReviewDesk api={api} />));
    await user.click(
      await screen.findByRole('button', {
        name: 'Preview bulk resolution of 1 trivially equal or formatting-only dispute',
      }),
    );
    const preview = screen.getByRole('region', { name: 'Bulk resolution: preview' });
    const items = within(preview).getAllByRole('listitem');
    expect(items).toHaveLength(1);
    expect(items[0]!.textContent).toContain('Extra lenses, right holder');
    expect(items[0]!.textContent).toContain('Entered: +1.00 DS / +1.00 ds');
    expect(items[0]!.textContent).toContain('Will be: +1.00 ds');
    // Nothing is sent before confirming.
    expect(resolved).toEqual([]);
    await user.click(within(preview).getByRole('button', { name: 'Confirm and resolve 1' }));
    await waitFor(() => expect(within(preview).getByRole('status').textContent).toBe('Resolved.'));
    expect(resolved).toEqual([
      {
        id: 'c-fmt',
        body: {
          value: '+1.00 ds',
          note: 'Bulk resolution: the candidates differed only in formatting; kept the provisional value.',
        },
      },
    ]);
  });

  it('pages through the server’s cursor: Next page asks with `next`, Previous page goes back', async () => {
    const user = userEvent.setup();
    const many = Array.from({ length: 30 }, (_, i) => ({
      ...angleDispute(),
      id: `c-${String(i).padStart(2, '0')}`,
    }));
    const { api, requests } = fakeServer(many);
    render(wrap(<ReviewDesk api={api} />));
    const pager = await screen.findByRole('navigation', { name: 'Pages of disputes' });
    expect(pager.textContent).toContain('Page 1 of 2 (30 disputes)');
    expect(within(screen.getByRole('table')).getAllByRole('row')).toHaveLength(1 + 25);
    const previous = within(pager).getByRole('button', { name: 'Previous page' });
    const next = within(pager).getByRole('button', { name: 'Next page' });
    expect((previous as HTMLButtonElement).disabled).toBe(true);
    await user.click(next);
    expect(await within(pager).findByText(/Page 2 of 2/)).toBeTruthy();
    expect(within(screen.getByRole('table')).getAllByRole('row')).toHaveLength(1 + 5);
    expect((next as HTMLButtonElement).disabled).toBe(true);
    expect(requests.at(-1)?.get('cursor')).toBe('after:25');
    expect(requests.every((q) => !q.has('page'))).toBe(true);
    await user.click(previous);
    expect(await within(pager).findByText(/Page 1 of 2/)).toBeTruthy();
    expect(requests.at(-1)?.has('cursor')).toBe(false);
  });

  it('never offers a Signed visit’s dispute for bulk resolution', async () => {
    const { api } = fakeServer([
      { ...textDispute('c-signed', ['a b', 'A  B']), signedVisit: true },
    ]);
    render(wrap(<ReviewDesk api={api} />));
    await screen.findByRole('table');
    expect(screen.queryByRole('button', { name: /Preview bulk resolution/ })).toBeNull();
  });

  it('says in words when there are no disputes, and when the server cannot be reached', async () => {
    const { api } = fakeServer([]);
    render(wrap(<ReviewDesk api={api} />));
    await waitFor(() =>
      expect(screen.getByRole('status').textContent).toBe(
        'No open disputes in your sites. Every tablet’s edits agree.',
      ),
    );
    expect(screen.queryByRole('table')).toBeNull();
    cleanup();
    const offline = new ReviewApi({
      fetch: () => Promise.reject(new TypeError('Failed to fetch')),
      accessToken: () => 'token',
    });
    render(wrap(<ReviewDesk api={offline} />));
    expect(
      (
        await screen.findByText(
          /The disputes could not be loaded: The clinic server could not be reached/,
        )
      ).textContent,
    ).toContain('check the network and try again');
  });

  it('tells anyone but a supervisor that the desk is for supervisors', () => {
    render(
      wrap(
        <SessionContext.Provider
          value={{
            user: {
              id: '0190c6a0-0000-7000-8000-0000000000d1',
              name: 'Bram Osei',
              email: 'b@clinic.test',
              role: 'orthoptist',
              siteIds: [],
            },
            deviceId: null,
            activeSiteId: null,
          }}
        >
          <ReviewDeskScreen />
        </SessionContext.Provider>,
      ),
    );
    expect(screen.getByRole('note').textContent).toMatch(
      /^For supervisorsThe Review desk is where supervisors resolve Disputes/,
    );
    expect(screen.queryByRole('table')).toBeNull();
  });
});
