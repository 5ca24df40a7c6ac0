import { cleanup, render, screen } from '@testing-library/react';
import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { MemoryRouter, Route, Routes } from 'react-router-dom';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { AMARA, PASSWORDS, ROSALIND, TOMASZ, fakeClinicServer } from './fake-clinic-server.fixture';
import { IdentityApi } from './identity-api';
import { HomeRedirect, IdentityGate, RequireArea } from './IdentityGate';
import { SessionProvider } from './SessionProvider';
import { SessionStore } from './session-store';
import { eraseAllDatabases, writeErasureNote } from './tablet-erasure';

async function renderAt(path: string, signInAs?: string) {
  const server = fakeClinicServer(() => Date.now());
  const store = new SessionStore({
    api: new IdentityApi({ fetch: server.fetch }),
    countOutbox: async () => 0,
  });
  await store.load();
  if (signInAs) await store.signIn({ email: signInAs, password: PASSWORDS[signInAs]! });
  render(
    <QueryClientProvider client={new QueryClient()}>
      <SessionProvider store={store} background={false}>
        <MemoryRouter initialEntries={[path]}>
          <IdentityGate loading={<p>Loading</p>} erased={(note) => <p>Erased: {note.message}</p>}>
            <Routes>
              <Route path="/signin" element={<p>Sign-in screen</p>} />
              <Route path="/unlock" element={<p>Unlock screen</p>} />
              <Route
                path="/today"
                element={
                  <RequireArea area="clinical">
                    <p>Today screen</p>
                  </RequireArea>
                }
              />
              <Route
                path="/review"
                element={
                  <RequireArea area="review">
                    <p>Review desk screen</p>
                  </RequireArea>
                }
              />
              <Route
                path="/fleet"
                element={
                  <RequireArea area="admin">
                    <p>Fleet screen</p>
                  </RequireArea>
                }
              />
              <Route path="/" element={<HomeRedirect />} />
            </Routes>
          </IdentityGate>
        </MemoryRouter>
      </SessionProvider>
    </QueryClientProvider>,
  );
  return store;
}

beforeEach(async () => {
  await eraseAllDatabases();
  localStorage.clear();
});
afterEach(cleanup);

/** Waits for `text`, then checks it is all the page shows: no other screen, no loading. */
async function expectOnlyScreen(text: string) {
  await screen.findByText(text);
  expect(document.body.textContent).toBe(text);
}

describe('routing by who is signed in', () => {
  it('sends nobody-signed-in to sign-in from a clinical screen', async () => {
    await renderAt('/today');
    await expectOnlyScreen('Sign-in screen');
  });

  it('keeps an admin out of the clinical screens and the Review desk', async () => {
    await renderAt('/today', ROSALIND.email);
    await expectOnlyScreen('Fleet screen');
    cleanup();
    await renderAt('/review', ROSALIND.email);
    await expectOnlyScreen('Fleet screen');
  });

  it('lets a supervisor into the Review desk but not a clinician', async () => {
    await renderAt('/review', TOMASZ.email);
    await expectOnlyScreen('Review desk screen');
    cleanup();
    await renderAt('/review', AMARA.email);
    await expectOnlyScreen('Today screen');
  });

  it('shows why the tablet was erased instead of any screen', async () => {
    writeErasureNote({
      cause: 'revoked',
      message: 'This tablet was revoked by the clinic.',
      at: 0,
    });
    await renderAt('/today');
    await expectOnlyScreen('Erased: This tablet was revoked by the clinic.');
    expect(screen.queryByText('Sign-in screen')).toBeNull();
  });
});
