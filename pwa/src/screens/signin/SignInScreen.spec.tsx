import { cleanup, render, screen, waitFor } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { MemoryRouter, Route, Routes } from 'react-router-dom';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { AMARA, PASSWORDS, fakeClinicServer } from '../../auth/fake-clinic-server.fixture';
import { IdentityApi } from '../../auth/identity-api';
import { HomeRedirect } from '../../auth/IdentityGate';
import { SessionProvider } from '../../auth/SessionProvider';
import { SessionStore } from '../../auth/session-store';
import { eraseAllDatabases } from '../../auth/tablet-erasure';
import SignInScreen from './SignInScreen';

function renderSignIn(store: SessionStore, path = '/signin') {
  return render(
    <QueryClientProvider client={new QueryClient()}>
      <SessionProvider store={store} background={false}>
        <MemoryRouter initialEntries={[path]}>
          <Routes>
            <Route path="/signin" element={<SignInScreen />} />
            <Route path="/pin" element={<p>PIN offer</p>} />
            <Route path="/" element={<HomeRedirect />} />
            <Route path="/today" element={<p>Today list</p>} />
          </Routes>
        </MemoryRouter>
      </SessionProvider>
    </QueryClientProvider>,
  );
}

function makeStore() {
  const server = fakeClinicServer(() => Date.now());
  const store = new SessionStore({
    api: new IdentityApi({ fetch: server.fetch }),
    countOutbox: async () => 0,
  });
  return { server, store };
}

beforeEach(async () => {
  await eraseAllDatabases();
});
afterEach(cleanup);

describe('the sign-in form', () => {
  it('shows each field’s message beside it and sends nothing when both are empty', async () => {
    const { server, store } = makeStore();
    renderSignIn(store);
    const user = userEvent.setup();
    await user.click(screen.getByRole('button', { name: 'Sign in' }));

    const email = screen.getByLabelText('E-mail address');
    const password = screen.getByLabelText('Password');
    await waitFor(() => expect(email.getAttribute('aria-invalid')).toBe('true'));
    expect(document.getElementById(email.getAttribute('aria-describedby')!)?.textContent).toBe(
      'Enter your e-mail address',
    );
    expect(document.getElementById(password.getAttribute('aria-describedby')!)?.textContent).toBe(
      'Enter your password',
    );
    expect(server.calls).toEqual([]);
  });

  it('says why when the server refuses the password, in its own words', async () => {
    const { store } = makeStore();
    renderSignIn(store);
    const user = userEvent.setup();
    await user.type(screen.getByLabelText('E-mail address'), AMARA.email);
    await user.type(screen.getByLabelText('Password'), 'not the password');
    await user.click(screen.getByRole('button', { name: 'Sign in' }));
    await waitFor(() =>
      expect(screen.getByRole('alert').textContent).toMatch(/do not match an active account/),
    );
    expect(store.getSnapshot().activeUser).toBeNull();
  });

  it('signs in, and on an enrolled tablet offers a PIN next', async () => {
    const { server, store } = makeStore();
    await store.load();
    await store.enrol(server.enrolmentCode);
    renderSignIn(store, `/signin?email=${encodeURIComponent(AMARA.email)}`);
    const user = userEvent.setup();
    expect((screen.getByLabelText('E-mail address') as HTMLInputElement).value).toBe(AMARA.email);
    await user.type(screen.getByLabelText('Password'), PASSWORDS[AMARA.email]!);
    await user.click(screen.getByRole('button', { name: 'Sign in' }));
    await waitFor(() => expect(document.body.textContent).toBe('PIN offer'));
    expect(store.getSnapshot().activeUser?.id).toBe(AMARA.id);
  });

  it('goes straight to Today in a browser that is not an enrolled tablet', async () => {
    const { store } = makeStore();
    await store.load();
    renderSignIn(store);
    const user = userEvent.setup();
    await user.type(screen.getByLabelText('E-mail address'), AMARA.email);
    await user.type(screen.getByLabelText('Password'), PASSWORDS[AMARA.email]!);
    await user.click(screen.getByRole('button', { name: 'Sign in' }));
    await waitFor(() => expect(document.body.textContent).toBe('Today list'));
    expect(store.getSnapshot().tablet).toBeNull();
  });
});
