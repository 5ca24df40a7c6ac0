import { cleanup, render, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { MemoryRouter, Route, Routes } from 'react-router-dom';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { fakeClinicServer } from '../../auth/fake-clinic-server.fixture';
import { IdentityApi } from '../../auth/identity-api';
import { SessionProvider } from '../../auth/SessionProvider';
import { SessionStore } from '../../auth/session-store';
import { eraseAllDatabases } from '../../auth/tablet-erasure';
import EnrolScreen from './EnrolScreen';
import { parseEnrolmentPayload } from './enrolment-payload';

function renderEnrol(path = '/enrol') {
  const server = fakeClinicServer(() => Date.now());
  const store = new SessionStore({
    api: new IdentityApi({ fetch: server.fetch }),
    countOutbox: async () => 0,
  });
  render(
    <QueryClientProvider client={new QueryClient()}>
      <SessionProvider store={store} background={false}>
        <MemoryRouter initialEntries={[path]}>
          <Routes>
            <Route path="/enrol" element={<EnrolScreen />} />
            <Route path="/signin" element={<p>Sign-in screen</p>} />
          </Routes>
        </MemoryRouter>
      </SessionProvider>
    </QueryClientProvider>,
  );
  return { server, store };
}

beforeEach(async () => {
  await eraseAllDatabases();
});
afterEach(cleanup);

describe('enrolling a tablet', () => {
  it('reads the code from the server’s QR link, a query, JSON or the bare code', () => {
    expect(parseEnrolmentPayload('http://127.0.0.1:3000/enrol#code=K7Q2M9XD')).toBe('K7Q2M9XD');
    expect(parseEnrolmentPayload('https://clinic.test/enrol?code=k7q2-m9xd')).toBe('K7Q2M9XD');
    expect(parseEnrolmentPayload('{"code":"K7Q2M9XD"}')).toBe('K7Q2M9XD');
    expect(parseEnrolmentPayload(' k7q2 m9xd ')).toBe('K7Q2M9XD');
    expect(parseEnrolmentPayload('https://elsewhere.test/')).toBeNull();
  });

  it('says what is wrong beside the field when the code is empty', async () => {
    const { server } = renderEnrol();
    await userEvent.setup().click(screen.getByRole('button', { name: 'Enrol' }));
    const field = screen.getByLabelText('Enrolment code');
    await waitFor(() => expect(field.getAttribute('aria-invalid')).toBe('true'));
    expect(document.getElementById(field.getAttribute('aria-describedby')!)?.textContent).toBe(
      'Enter the enrolment code from the Fleet screen',
    );
    expect(server.calls).toEqual([]);
  });

  it('enrols with a typed code and keeps the tablet’s credentials', async () => {
    const { store } = renderEnrol();
    const user = userEvent.setup();
    await user.type(screen.getByLabelText('Enrolment code'), 'k7q2m9xd');
    await user.click(screen.getByRole('button', { name: 'Enrol' }));
    await waitFor(() => expect(document.body.textContent).toBe('Sign-in screen'));
    expect(store.getSnapshot().tablet?.deviceId).toBe('0190c6a0-0000-7000-8000-0000000000d1');
  });

  it('shows the server’s words for a code that does not work', async () => {
    renderEnrol('/enrol#code=WRONGCODE');
    expect((screen.getByLabelText('Enrolment code') as HTMLInputElement).value).toBe('WRONGCODE');
    await userEvent.setup().click(screen.getByRole('button', { name: 'Enrol' }));
    await waitFor(() =>
      expect(screen.getByRole('alert').textContent).toMatch(/not valid or has expired/),
    );
  });

  it('falls back to typing, in words, when the device has no camera', async () => {
    renderEnrol();
    await userEvent.setup().click(screen.getByRole('button', { name: 'Scan the QR code' }));
    const scanner = screen.getByRole('region', { name: 'Scan the enrolment QR code' });
    await waitFor(() =>
      expect(within(scanner).getByRole('status').textContent).toBe(
        'This device has no camera we can use. Type the code below instead.',
      ),
    );
    const code = screen.getByLabelText('Enrolment code') as HTMLInputElement;
    expect(code.disabled).toBe(false);
    expect(code.value).toBe('');
  });
});
