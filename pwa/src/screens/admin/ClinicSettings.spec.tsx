// The clinic settings form on the Sites screen: the rule for tablets without security hardware
// for the PIN (accept PIN only, or a passphrase of a length with kinds of character), checked
// before it is sent, and sent as the server's setting `unlockWithoutHardware`.
import { cleanup, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { fakeClinicServer } from '../../auth/fake-clinic-server.fixture';
import { renderAsAdmin } from '../../auth/session-screen.fixture';
import { eraseAllDatabases } from '../../auth/tablet-erasure';
import SitesScreen from './SitesScreen';

beforeEach(async () => {
  await eraseAllDatabases();
});
afterEach(cleanup);

async function renderSettings() {
  const server = fakeClinicServer(() => Date.now());
  const patches: unknown[] = [];
  let settings: Record<string, unknown> = {
    unsyncedWarningHours: 24,
    unlockWithoutHardware: { rule: 'pin-only' },
  };
  server.adminRoutes = (route, body) => {
    if (route === 'GET /api/admin/sites') return { status: 200, body: [] };
    if (route === 'GET /api/admin/settings') return { status: 200, body: settings };
    if (route === 'PATCH /api/admin/settings') {
      patches.push(body);
      settings = { ...settings, ...(body as object) };
      return { status: 200, body: settings };
    }
    return null;
  };
  await renderAsAdmin(server, <SitesScreen />);
  return { patches };
}

describe('the clinic’s rule for tablets without security hardware', () => {
  it('sets a passphrase policy, refusing a length under 12 with the field named', async () => {
    const { patches } = await renderSettings();
    const user = userEvent.setup();
    const form = await screen.findByRole('form', { name: 'Clinic settings' }, { timeout: 10_000 });
    const rule = within(form).getByLabelText('Tablets without security hardware for the PIN');
    expect((rule as HTMLSelectElement).value).toBe('pin-only');
    expect(within(form).queryByLabelText('Passphrase at least (characters)')).toBeNull();

    await user.selectOptions(rule, 'passphrase');
    const length = within(form).getByLabelText('Passphrase at least (characters)');
    await user.clear(length);
    await user.type(length, '8');
    await user.click(within(form).getByRole('checkbox', { name: 'an upper-case letter' }));
    await user.click(within(form).getByRole('button', { name: 'Save settings' }));
    await waitFor(() =>
      expect(within(form).getByRole('alert').textContent).toBe(
        'The passphrase length must be at least 12 characters',
      ),
    );
    expect(patches).toEqual([]);

    await user.clear(length);
    await user.type(length, '16');
    await user.click(within(form).getByRole('checkbox', { name: 'a digit' }));
    await user.click(within(form).getByRole('button', { name: 'Save settings' }));
    await within(form).findByText('Saved. Tablets follow it at their next check with the server.');
    expect(patches).toEqual([
      {
        unsyncedWarningHours: 24,
        unlockWithoutHardware: {
          rule: 'passphrase',
          minLength: 16,
          requiredClasses: ['uppercase', 'digit'],
        },
      },
    ]);
  });

  it('goes back to accepting a PIN only', async () => {
    const { patches } = await renderSettings();
    const user = userEvent.setup();
    const form = await screen.findByRole('form', { name: 'Clinic settings' }, { timeout: 10_000 });
    const rule = within(form).getByLabelText('Tablets without security hardware for the PIN');
    await user.selectOptions(rule, 'passphrase');
    await user.selectOptions(rule, 'pin-only');
    await user.click(within(form).getByRole('button', { name: 'Save settings' }));
    await waitFor(() => expect(patches).toHaveLength(1));
    expect(patches[0]).toEqual({
      unsyncedWarningHours: 24,
      unlockWithoutHardware: { rule: 'pin-only' },
    });
  });
});
