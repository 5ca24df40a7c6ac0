import { readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { cleanup, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { SITE_A, SITE_B, fakeClinicServer } from '../../auth/fake-clinic-server.fixture';
import type { FleetDevice } from '@fuselight/shared';
import { renderAsAdmin } from '../../auth/session-screen.fixture';
import { eraseAllDatabases } from '../../auth/tablet-erasure';
import FleetScreen from './FleetScreen';

const TABLET_ID = '0190c6a0-0000-7000-8000-0000000000e1';

async function renderFleet(devices: unknown[]) {
  const server = fakeClinicServer(() => Date.now());
  const seen: { route: string; body: unknown }[] = [];
  server.adminRoutes = (route, body, caller) => {
    if (!caller) return { status: 401, body: { message: 'Sign in first.' } };
    seen.push({ route, body });
    switch (route) {
      case 'GET /api/admin/sites':
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
            {
              id: SITE_B,
              name: 'Saltmarsh School',
              kind: 'outreach',
              address: null,
              timeZone: 'Europe/London',
            },
          ],
        };
      case 'GET /api/admin/devices':
        return { status: 200, body: devices };
      case 'POST /api/admin/devices':
        return {
          status: 201,
          body: {
            deviceId: TABLET_ID,
            enrolmentCode: 'H4RB0URV',
            expiresAt: '2026-12-02T08:00:00.000Z',
            qrPayload: 'http://tablet.test/enrol#code=H4RB0URV',
          },
        };
      case `PATCH /api/admin/devices/${TABLET_ID}/sites`:
        devices = devices.map((d) =>
          (d as FleetDevice).id === TABLET_ID
            ? { ...(d as FleetDevice), siteIds: (body as { siteIds: string[] }).siteIds }
            : d,
        );
        return { status: 200, body: devices[0] };
      case `POST /api/admin/devices/${TABLET_ID}/revoke`:
        devices = devices.map((d) =>
          (d as FleetDevice).id === TABLET_ID
            ? { ...(d as FleetDevice), state: 'revoked', revokedAt: '2026-12-01T10:00:00.000Z' }
            : d,
        );
        return { status: 200, body: devices[0] };
      default:
        return null;
    }
  };
  await renderAsAdmin(server, <FleetScreen />);
  return { seen };
}

const tablet: FleetDevice = {
  id: TABLET_ID,
  label: 'Orthoptics room 2',
  state: 'active',
  siteIds: [SITE_A],
  createdAt: '2026-11-30T08:00:00.000Z',
  enrolledAt: '2026-11-30T08:20:00.000Z',
  enrolmentExpiresAt: null,
  lastSeenAt: '2026-12-01T09:30:00.000Z',
  appVersion: '0.1.0',
  outboxSize: 4,
  retiredAt: null,
  revokedAt: null,
};

beforeEach(async () => {
  await eraseAllDatabases();
});
afterEach(cleanup);

describe('the Fleet', () => {
  it('says so in words when no tablet is registered', async () => {
    await renderFleet([]);
    await waitFor(() =>
      expect(document.body.textContent).toContain('No tablets are registered yet.'),
    );
    expect(screen.queryByRole('table')).toBeNull();
  });

  it('shows each tablet’s last contact, app version and Outbox size', async () => {
    await renderFleet([tablet]);
    const row = await screen.findByRole('row', { name: /Orthoptics room 2/ });
    expect(row.textContent).toContain('In use');
    expect(row.textContent).toContain('Harbourview Clinic');
    expect(row.textContent).toContain('0.1.0');
    const headers = screen.getAllByRole('columnheader').map((h) => h.textContent);
    const byColumn = Object.fromEntries(headers.map((h, i) => [h, row.children[i]?.textContent]));
    expect(byColumn.Outbox).toBe('4');
    expect(byColumn['App version']).toBe('0.1.0');
    expect(row.textContent).toContain(new Date('2026-12-01T09:30:00.000Z').toLocaleString());
  });

  it('shows how each tablet’s data key is protected, and says the risk of PIN-only tablets plainly', async () => {
    const other = (n: number, label: string, keyProtection: FleetDevice['keyProtection']) => ({
      ...tablet,
      id: `0190c6a0-0000-7000-8000-0000000000f${n}`,
      label,
      keyProtection,
    });
    await renderFleet([
      { ...tablet, keyProtection: 'pin-only' },
      other(1, 'Outreach van', 'passphrase'),
      other(2, 'Spare tablet', null),
      other(3, 'Old tablet', 'pin-only'),
      other(5, 'Front desk tablet', 'hardware'),
      // A tablet of an earlier build whose Fleet row has no such field at all.
      (({ keyProtection: _dropped, ...rest }) => rest)(other(4, 'Desk drawer', 'hardware')),
    ]);
    const dataKey = async (name: RegExp) => {
      const row = await screen.findByRole('row', { name });
      const headers = screen.getAllByRole('columnheader').map((h) => h.textContent);
      return row.children[headers.indexOf('Data key')]?.textContent;
    };
    expect(await dataKey(/Orthoptics room 2/)).toBe('PIN only (can be opened offline if copied)');
    expect(await dataKey(/Outreach van/)).toBe('Passphrase');
    expect(await dataKey(/Spare tablet/)).toBe('Not reported');
    expect(await dataKey(/Front desk tablet/)).toBe(
      'Hardware-backed (each PIN needs this tablet’s security hardware)',
    );
    expect(await dataKey(/Desk drawer/)).toBe('Not reported');
    const risk = screen.getByText(/are protected by a PIN only/).closest('[role="status"]');
    expect(risk?.textContent).toContain(
      '2 tablets are protected by a PIN only: Orthoptics room 2, Old tablet.',
    );
    expect(risk?.textContent).toContain(
      'Someone who copies the browser profile can try every PIN offline, where the wrong-PIN limit does not count: a high-end graphics card tries every 6-digit PIN in about 3 minutes.',
    );
  });

  it('says nothing of PIN risk when no tablet in use is PIN-only', async () => {
    await renderFleet([
      { ...tablet, keyProtection: 'passphrase' },
      {
        ...tablet,
        id: '0190c6a0-0000-7000-8000-0000000000f9',
        label: 'Lost one',
        state: 'revoked',
        keyProtection: 'pin-only',
      },
    ]);
    await screen.findByRole('row', { name: /Orthoptics room 2/ });
    expect(document.body.textContent).not.toContain('protected by a PIN only');
  });

  it('changes a tablet’s sites, saying that a site taken off is removed from the tablet', async () => {
    const { seen } = await renderFleet([{ ...tablet, siteIds: [SITE_A, SITE_B] }]);
    const user = userEvent.setup();
    const row = await screen.findByRole('row', { name: /Orthoptics room 2/ });
    expect(row.textContent).toContain('Harbourview Clinic, Saltmarsh School');
    await user.click(
      within(row).getByRole('button', { name: 'Change the sites of Orthoptics room 2' }),
    );
    const dialog = screen.getByRole('alertdialog', { name: 'Sites of Orthoptics room 2' });
    await user.click(within(dialog).getByRole('checkbox', { name: /Saltmarsh School/ }));
    expect(dialog.textContent).toContain(
      'Records of Saltmarsh School will be removed from this tablet the next time it reaches the server. Edits it has not sent yet are kept until they reach the server.',
    );
    await user.click(within(dialog).getByRole('checkbox', { name: /Harbourview Clinic/ }));
    await user.click(within(dialog).getByRole('button', { name: 'Save sites' }));
    expect(dialog.textContent).toContain('Sites: choose at least one site this tablet serves');
    expect(seen.some((s) => s.route.startsWith('PATCH'))).toBe(false);

    await user.click(within(dialog).getByRole('checkbox', { name: /Harbourview Clinic/ }));
    await user.click(within(dialog).getByRole('button', { name: 'Save sites' }));
    await waitFor(() => expect(screen.queryByRole('alertdialog')).toBeNull());
    expect(seen.find((s) => s.route.startsWith('PATCH'))).toEqual({
      route: `PATCH /api/admin/devices/${TABLET_ID}/sites`,
      body: { siteIds: [SITE_A] },
    });
    await waitFor(() =>
      expect(screen.getByRole('row', { name: /Orthoptics room 2/ }).textContent).not.toContain(
        'Saltmarsh School',
      ),
    );
  });

  it('says which field of a malformed answer is wrong instead of showing the tablets', async () => {
    await renderFleet([{ ...tablet, state: 'lost' }]);
    const notice = await screen.findByText(/Could not load the Fleet/);
    expect(notice.textContent).toContain(
      'The clinic server’s answer to GET /api/admin/devices is not what this app expects (0.state: state must be one of: pending, active, retired, revoked)',
    );
    expect(screen.queryByRole('row', { name: /Orthoptics room 2/ })).toBeNull();
  });

  it('registers a tablet for a site and shows its one-time code as a QR code', async () => {
    const { seen } = await renderFleet([]);
    const user = userEvent.setup();
    await user.click(screen.getByRole('button', { name: 'Register tablet' }));
    const name = screen.getByLabelText('Tablet name');
    await waitFor(() => expect(name.getAttribute('aria-invalid')).toBe('true'));
    expect(document.getElementById(name.getAttribute('aria-describedby')!)?.textContent).toBe(
      'Give the tablet a name people will recognise',
    );
    const sitesGroup = screen.getByRole('group', { name: 'Sites it serves' });
    expect(document.getElementById(sitesGroup.getAttribute('aria-describedby')!)?.textContent).toBe(
      'Choose at least one site the tablet serves',
    );
    expect(seen.some((c) => c.route.startsWith('POST'))).toBe(false);

    await user.type(screen.getByLabelText('Tablet name'), 'Outreach bag 1');
    await user.click(await screen.findByLabelText('Harbourview Clinic'));
    await user.click(screen.getByRole('button', { name: 'Register tablet' }));
    expect((await screen.findByTestId('enrolment-code')).textContent).toBe('H4RB0URV');
    expect(document.querySelector('.fl-id-qr svg')).not.toBeNull();
    expect(seen.find((c) => c.route === 'POST /api/admin/devices')?.body).toEqual({
      label: 'Outreach bag 1',
      siteIds: [SITE_A],
    });
  });

  it('keeps a tablet’s actions on one line and asks for confirmation in a row beneath it', async () => {
    // The screen's own stylesheet, so the computed style is what Chromium applies.
    const style = document.createElement('style');
    style.textContent = readFileSync(resolve(import.meta.dirname, 'fleet.css'), 'utf8');
    document.head.append(style);
    try {
      await renderFleet([tablet, { ...tablet, id: crypto.randomUUID(), label: 'Outreach bag 1' }]);
      const user = userEvent.setup();
      const row = await screen.findByRole('row', { name: /Orthoptics room 2/ });
      const actions = row.children[7] as HTMLElement;
      expect(
        within(actions)
          .getAllByRole('button')
          .map((b) => b.textContent),
      ).toEqual(['Retire', 'Revoke']);
      const buttons = actions.querySelector('.fl-fleet-actions__buttons') as HTMLElement;
      expect([getComputedStyle(actions).whiteSpace, getComputedStyle(buttons).flexWrap]).toEqual([
        'nowrap',
        'nowrap',
      ]);

      await user.click(within(actions).getByRole('button', { name: 'Revoke Orthoptics room 2' }));
      const dialog = screen.getByRole('alertdialog', { name: 'Revoke Orthoptics room 2?' });
      // The Actions cell still holds its two buttons only; the question spans the table in the
      // next row, before the other tablet's row.
      expect(actions.contains(dialog)).toBe(false);
      expect(within(actions).getAllByRole('button')).toHaveLength(2);
      const followUp = dialog.closest('tr') as HTMLTableRowElement;
      expect(followUp.previousElementSibling).toBe(row);
      expect((followUp.firstElementChild as HTMLTableCellElement).colSpan).toBe(8);
      expect(followUp.nextElementSibling?.querySelector('th')?.textContent).toBe('Outreach bag 1');
      await user.click(within(dialog).getByRole('button', { name: 'Cancel' }));
      expect(screen.queryByRole('alertdialog')).toBeNull();
      expect(row.nextElementSibling?.querySelector('th')?.textContent).toBe('Outreach bag 1');
    } finally {
      style.remove();
    }
  });

  it('revokes a tablet only after the admin confirms', async () => {
    const { seen } = await renderFleet([tablet]);
    const user = userEvent.setup();
    await user.click(await screen.findByRole('button', { name: 'Revoke Orthoptics room 2' }));
    const dialog = screen.getByRole('alertdialog', { name: 'Revoke Orthoptics room 2?' });
    expect(dialog.textContent).toContain('4 changes it has not sent will be lost');
    expect(seen.some((c) => c.route.endsWith('/revoke'))).toBe(false);
    await user.click(within(dialog).getByRole('button', { name: 'Revoke now' }));
    await waitFor(() =>
      expect(seen.some((c) => c.route === `POST /api/admin/devices/${TABLET_ID}/revoke`)).toBe(
        true,
      ),
    );
    expect((await screen.findByRole('row', { name: /Orthoptics room 2/ })).textContent).toContain(
      'Revoked',
    );
  });
});
