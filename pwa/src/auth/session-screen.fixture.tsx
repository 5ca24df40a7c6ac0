// A screen rendered as the app renders it, under a session store that talks to the fake clinic
// server: for the specs of the admin screens and the identity screens.
import { render } from '@testing-library/react';
import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import type { ReactElement } from 'react';
import { MemoryRouter, Route, Routes } from 'react-router-dom';
import { PASSWORDS, ROSALIND, type FakeClinicServer } from './fake-clinic-server.fixture';
import { IdentityApi } from './identity-api';
import { SessionProvider } from './SessionProvider';
import { SessionStore, type SessionStoreOptions } from './session-store';

/** A session store on the fake server, counting no Outbox entries. */
export function storeOn(
  server: FakeClinicServer,
  options: Omit<SessionStoreOptions, 'api' | 'countOutbox'> = {},
): SessionStore {
  return new SessionStore({
    api: new IdentityApi({ fetch: server.fetch }),
    countOutbox: async () => 0,
    ...options,
  });
}

/**
 * Renders `element` under the store. With `at`, the screen is the route at that address and "/"
 * shows "Home" (where a screen goes when it is done).
 */
export function renderWithSession(
  store: SessionStore,
  element: ReactElement,
  options: { at?: string; queryClient?: QueryClient } = {},
): void {
  const { at } = options;
  render(
    <QueryClientProvider client={options.queryClient ?? new QueryClient()}>
      <SessionProvider store={store} background={false}>
        {at ? (
          <MemoryRouter initialEntries={[at]}>
            <Routes>
              <Route path={at} element={element} />
              <Route path="/" element={<p>Home</p>} />
            </Routes>
          </MemoryRouter>
        ) : (
          <MemoryRouter>{element}</MemoryRouter>
        )}
      </SessionProvider>
    </QueryClientProvider>,
  );
}

/** Signs the admin Rosalind in on the fake server and renders an admin screen for her. */
export async function renderAsAdmin(
  server: FakeClinicServer,
  element: ReactElement,
): Promise<SessionStore> {
  const store = storeOn(server);
  await store.load();
  await store.signIn({ email: ROSALIND.email, password: PASSWORDS[ROSALIND.email]! });
  renderWithSession(store, element, {
    queryClient: new QueryClient({ defaultOptions: { queries: { retry: false } } }),
  });
  return store;
}
