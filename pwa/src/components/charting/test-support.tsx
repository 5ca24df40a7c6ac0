// Rendering a charting screen in a test: a fresh fake-indexeddb database behind the real
// repositories, a signed-in session, a query client and a router at the given path.
import type { SessionUser } from '@fuselight/shared';
import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { cleanup, render } from '@testing-library/react';
import { afterEach } from 'vitest';
import type { ReactElement } from 'react';
import { MemoryRouter, Route, Routes, useLocation } from 'react-router-dom';
import { SessionContext } from '../../auth/session-context';
import { OutboxRepository, RecordsRepository, RepositoriesProvider } from '../../data';
import { FuselightDb } from '../../data/db';

// Testing Library cleans up by itself only with vitest globals, which this project leaves off.
afterEach(cleanup);

export const TEST_SITE_ID = '0190c6a0-0000-7000-8000-00000000a001';
export const ORTHOPTIST: SessionUser = {
  id: '0190c6a0-0000-7000-8000-00000000d001',
  name: 'Test Orthoptist',
  email: 'orthoptist@example.test',
  role: 'orthoptist',
  siteIds: [TEST_SITE_ID],
};
export const SUPERVISOR: SessionUser = {
  id: '0190c6a0-0000-7000-8000-00000000d003',
  name: 'Test Supervisor',
  email: 'supervisor@example.test',
  role: 'supervisor',
  siteIds: [TEST_SITE_ID],
};
export const TEST_DEVICE_ID = '0190c6a0-0000-7000-8000-0000000de001';

export function freshRepositories() {
  const db = new FuselightDb(`charting-test-${crypto.randomUUID()}`);
  return { db, records: new RecordsRepository(db), outbox: new OutboxRepository(db) };
}

export function editContext(user: SessionUser = ORTHOPTIST, nowMs = Date.now()) {
  return { authorId: user.id, deviceId: TEST_DEVICE_ID, nowMs };
}

/** An invented patient with a visit at the test site, written through the real repository. */
export async function createPatientVisit(
  repositories: ReturnType<typeof freshRepositories>,
  overrides: { patient?: Record<string, unknown>; visit?: Record<string, unknown> } = {},
) {
  const patientId = await repositories.records.create(
    'patient',
    {
      siteId: TEST_SITE_ID,
      givenName: 'Wren',
      familyName: 'Altamira',
      dateOfBirth: '2016-04-09',
      clinicNumber: 'QX-4410',
      ...overrides.patient,
    },
    editContext(),
  );
  const visitId = await repositories.records.create(
    'visit',
    {
      siteId: TEST_SITE_ID,
      patientId,
      date: '2026-11-30',
      clinicianId: ORTHOPTIST.id,
      status: 'draft',
      ...overrides.visit,
    },
    editContext(),
  );
  return { patientId, visitId };
}

function WhereAmI() {
  const location = useLocation();
  return <output data-testid="location">{location.pathname}</output>;
}

export function renderScreen(
  element: ReactElement,
  options: {
    repositories: ReturnType<typeof freshRepositories>;
    user?: SessionUser | null;
    path?: string;
    route?: string;
  },
) {
  const queryClient = new QueryClient({
    defaultOptions: { queries: { retry: false, networkMode: 'always' } },
  });
  const user = options.user === undefined ? ORTHOPTIST : options.user;
  const path = options.path ?? '/';
  return render(
    <QueryClientProvider client={queryClient}>
      <RepositoriesProvider
        value={{ records: options.repositories.records, outbox: options.repositories.outbox }}
      >
        <SessionContext.Provider
          value={{ user, deviceId: TEST_DEVICE_ID, activeSiteId: TEST_SITE_ID }}
        >
          <MemoryRouter initialEntries={[path]}>
            <Routes>
              <Route path={options.route ?? '/'} element={element} />
              <Route path="*" element={null} />
            </Routes>
            <WhereAmI />
          </MemoryRouter>
        </SessionContext.Provider>
      </RepositoriesProvider>
    </QueryClientProvider>,
  );
}
