import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { cleanup, render, screen, within } from '@testing-library/react';
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
      const open = items.filter((i) => !resolved.some((r) => r.id === i.id));
      const page: DisputePage = {
        items: open,
        total: open.length,
        page: 1,
        pageSize: 25,
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
  return { api: new ReviewApi({ fetch, accessToken: () => 'token' }), resolved };
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
    expect(within(table).getByText('eso 12.0° (21.3Δ) / exo 8.0° (14.1Δ)')).toBeTruthy();
    expect(within(table).getByText('Amblyoscope angles: Objective horizontal angle')).toBeTruthy();
    expect(await screen.findByRole('button', { name: 'Disputes (1)' })).toBeTruthy();
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
    expect(await within(preview).findByText('Resolved.')).toBeTruthy();
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
    expect(
      await screen.findByText('No open disputes in your sites. Every tablet’s edits agree.'),
    ).toBeTruthy();
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
    expect(screen.getByRole('heading', { name: 'For supervisors' })).toBeTruthy();
    expect(screen.queryByRole('table')).toBeNull();
  });
});
