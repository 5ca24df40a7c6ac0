import { cleanup, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { SITE_A, fakeClinicServer } from '../../auth/fake-clinic-server.fixture';
import type { AdminUser } from '@fuselight/shared';
import { renderAsAdmin } from '../../auth/session-screen.fixture';
import { eraseAllDatabases } from '../../auth/tablet-erasure';
import PeopleScreen from './PeopleScreen';

const KOFI: AdminUser = {
  id: '0190c6a0-0000-7000-8000-000000000021',
  name: 'Kofi Brannagh',
  email: 'kofi@harbourview.test',
  role: 'orthoptist',
  siteIds: [SITE_A],
  needsCountersign: false,
  active: true,
  mustChangePassword: false,
  createdAt: '2026-11-30T08:00:00.000Z',
  lastSignInAt: '2026-12-01T08:10:00.000Z',
};

async function renderPeople(people: unknown[]) {
  const server = fakeClinicServer(() => Date.now());
  const seen: { route: string; body: unknown }[] = [];
  server.adminRoutes = (route, body) => {
    seen.push({ route, body });
    if (route === 'GET /api/admin/sites') {
      return {
        status: 200,
        body: [
          {
            id: SITE_A,
            name: 'Harbourview Clinic',
            kind: 'clinic',
            address: null,
            timeZone: 'Europe/London',
          },
        ],
      };
    }
    if (route === 'GET /api/admin/users') return { status: 200, body: people };
    if (route === 'POST /api/admin/users') {
      const user: AdminUser = {
        id: '0190c6a0-0000-7000-8000-000000000022',
        needsCountersign: false,
        active: true,
        mustChangePassword: true,
        createdAt: '2026-12-01T09:00:00.000Z',
        lastSignInAt: null,
        ...(body as Pick<AdminUser, 'name' | 'email' | 'role' | 'siteIds'>),
      };
      people = [...people, user];
      return { status: 201, body: { user, initialPassword: 'tide-lamp-orchid-42' } };
    }
    if (route === `PATCH /api/admin/users/${KOFI.id}`) {
      people = people.map((p) =>
        (p as AdminUser).id === KOFI.id ? { ...(p as AdminUser), ...(body as object) } : p,
      );
      return { status: 200, body: people.find((p) => (p as AdminUser).id === KOFI.id) };
    }
    return null;
  };
  await renderAsAdmin(server, <PeopleScreen />);
  return { seen };
}

beforeEach(async () => {
  await eraseAllDatabases();
});
afterEach(cleanup);

describe('People', () => {
  it('invites a person with a role and sites and shows their one-time password once', async () => {
    const { seen } = await renderPeople([]);
    await waitFor(() =>
      expect(document.body.textContent).toContain('Nobody has been invited yet.'),
    );
    expect(screen.queryByRole('button', { name: 'Deactivate' })).toBeNull();
    const user = userEvent.setup();
    const form = screen.getByRole('form', { name: 'Invite a person' });
    await user.click(within(form).getByRole('button', { name: 'Invite' }));
    const name = within(form).getByLabelText('Name');
    await waitFor(() => expect(name.getAttribute('aria-invalid')).toBe('true'));
    expect(document.getElementById(name.getAttribute('aria-describedby')!)?.textContent).toBe(
      'Enter the person’s name',
    );

    await user.type(within(form).getByLabelText('Name'), 'Priya Castellano');
    await user.type(within(form).getByLabelText('E-mail address'), 'priya@harbourview.test');
    await user.selectOptions(within(form).getByLabelText('Role'), 'supervisor');
    await user.click(await within(form).findByLabelText('Harbourview Clinic'));
    await user.click(within(form).getByRole('button', { name: 'Invite' }));
    expect((await screen.findByTestId('initial-password')).textContent).toBe('tide-lamp-orchid-42');
    expect(seen.find((c) => c.route === 'POST /api/admin/users')?.body).toEqual({
      name: 'Priya Castellano',
      email: 'priya@harbourview.test',
      role: 'supervisor',
      siteIds: [SITE_A],
    });
  });

  it('deactivates a person only after confirming', async () => {
    const { seen } = await renderPeople([KOFI]);
    const user = userEvent.setup();
    await user.click(await screen.findByRole('button', { name: 'Deactivate' }));
    const dialog = screen.getByRole('alertdialog', { name: 'Deactivate Kofi Brannagh?' });
    expect(seen.some((c) => c.route.startsWith('PATCH'))).toBe(false);
    await user.click(within(dialog).getByRole('button', { name: 'Deactivate' }));
    await waitFor(() =>
      expect(seen.find((c) => c.route === `PATCH /api/admin/users/${KOFI.id}`)?.body).toEqual({
        active: false,
      }),
    );
    // The row now offers Reactivate in place of Deactivate, and it does what it says.
    const reactivate = await screen.findByRole('button', { name: 'Reactivate' });
    expect(screen.queryByRole('button', { name: 'Deactivate' })).toBeNull();
    await user.click(reactivate);
    await waitFor(() =>
      expect(
        seen.filter((c) => c.route === `PATCH /api/admin/users/${KOFI.id}`).map((c) => c.body),
      ).toEqual([{ active: false }, { active: true }]),
    );
  });

  it('says which field of a malformed answer is wrong instead of showing a partial list', async () => {
    const { createdAt: _createdAt, ...withoutCreatedAt } = KOFI;
    await renderPeople([withoutCreatedAt]);
    const notice = await screen.findByText(/Could not load people/);
    expect(notice.textContent).toContain(
      'The clinic server’s answer to GET /api/admin/users is not what this app expects (0.createdAt:',
    );
    expect(screen.queryByText('Kofi Brannagh')).toBeNull();
  });

  it('changes a person’s role', async () => {
    const { seen } = await renderPeople([KOFI]);
    const user = userEvent.setup();
    await user.selectOptions(await screen.findByLabelText('Role of Kofi Brannagh'), 'outreach');
    await waitFor(() =>
      expect(seen.find((c) => c.route === `PATCH /api/admin/users/${KOFI.id}`)?.body).toEqual({
        role: 'outreach',
      }),
    );
  });
});
