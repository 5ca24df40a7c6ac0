// The PIN screen follows the clinic's rule for tablets without a platform authenticator
// (passphrase or PIN only, the setting `unlockWithoutHardware` sent with GET /api/devices/me)
// and names what a secret still lacks; on a tablet with one, a PIN of 6 digits is combined
// with its hardware share whatever the rule.
import { cleanup, screen, waitFor } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import {
  AMARA,
  PASSWORDS,
  fakeClinicServer,
  type FakeClinicServer,
} from '../../auth/fake-clinic-server.fixture';
import { renderWithSession, storeOn } from '../../auth/session-screen.fixture';
import { eraseAllDatabases } from '../../auth/tablet-erasure';
import { fakeHardware } from '../../data/crypto/fake-hardware.fixture';
import type { HardwareShare } from '../../data/crypto/hardware-share';
import PinSetupScreen from './PinSetupScreen';

beforeEach(async () => {
  await eraseAllDatabases();
});
afterEach(cleanup);

const PASSPHRASE_RULE = {
  rule: 'passphrase',
  minLength: 14,
  requiredClasses: ['uppercase', 'digit', 'symbol'],
};

async function pinScreen(options: { rule?: unknown; hardware?: HardwareShare } = {}) {
  const server: FakeClinicServer = fakeClinicServer(() => Date.now());
  server.unlockWithoutHardware = options.rule;
  const store = storeOn(server, options.hardware ? { hardware: options.hardware } : {});
  await store.load();
  await store.enrol(server.enrolmentCode);
  await store.signIn({ email: AMARA.email, password: PASSWORDS[AMARA.email]! });
  // The clinic's rule arrives with the tablet's check with the server.
  await store.checkTablet();
  renderWithSession(store, <PinSetupScreen />, { at: '/pin' });
  return store;
}

async function save(user: ReturnType<typeof userEvent.setup>, field: string, secret: string) {
  const input = screen.getByLabelText(field);
  await user.clear(input);
  await user.type(input, secret);
  const again = screen.getByLabelText(/^The same/);
  await user.clear(again);
  await user.type(again, secret);
  await user.click(screen.getByRole('button', { name: /^Save/ }));
}

describe('the PIN screen and the clinic’s rule for tablets without security hardware', () => {
  it('asks for a passphrase under the clinic’s policy and names what is missing', async () => {
    const store = await pinScreen({ rule: PASSPHRASE_RULE });
    const user = userEvent.setup();
    const field = 'New passphrase (at least 14 characters)';
    await screen.findByLabelText(field);
    expect(document.body.textContent).toContain(
      'so the clinic asks for a passphrase of at least 14 characters with an upper-case letter, a digit and a symbol (not a letter, digit or space).',
    );

    await save(user, field, '482913');
    expect((await screen.findByRole('alert')).textContent).toBe(
      'This tablet has no hardware key to guard a PIN, so the clinic asks for a passphrase. It still needs at least 14 characters (it has 6), an upper-case letter and a symbol (not a letter, digit or space).',
    );
    await save(user, field, 'harbour lights over the bay');
    await waitFor(() =>
      expect(screen.getByRole('alert').textContent).toBe(
        'This tablet has no hardware key to guard a PIN, so the clinic asks for a passphrase. It still needs an upper-case letter, a digit and a symbol (not a letter, digit or space).',
      ),
    );
    expect(store.getSnapshot().people[0]?.hasPin).toBe(false);

    await save(user, field, 'Harbour lights 7 over the bay!');
    await waitFor(() => expect(document.body.textContent).toBe('Home'), { timeout: 15_000 });
    expect(store.getSnapshot().people[0]?.hasPin).toBe(true);
  });

  it('refuses a PIN under the passphrase policy in the session store too, not only on screen', async () => {
    const store = await pinScreen({ rule: PASSPHRASE_RULE });
    await expect(store.setPin('48291357')).rejects.toThrow(
      'It still needs at least 14 characters (it has 8), an upper-case letter and a symbol',
    );
  });

  it('takes a PIN of 6 digits where the clinic accepts PIN only, and says the risk', async () => {
    const store = await pinScreen({ rule: { rule: 'pin-only' } });
    const user = userEvent.setup();
    await screen.findByText(/someone who copies its storage could try every PIN/);
    await save(user, 'New PIN (at least 6 digits)', '482913');
    await waitFor(() => expect(document.body.textContent).toBe('Home'), { timeout: 15_000 });
    expect(store.getSnapshot().people[0]?.hasPin).toBe(true);
  });

  it('takes a PIN of 6 digits on a tablet with security hardware, whatever the rule, and combines them', async () => {
    const hardware = fakeHardware();
    const store = await pinScreen({ rule: PASSPHRASE_RULE, hardware });
    const user = userEvent.setup();
    await screen.findByText(/your PIN opens the tablet’s data only together with it/);
    await save(user, 'New PIN (at least 6 digits)', '482913');
    await waitFor(() => expect(document.body.textContent).toBe('Home'), { timeout: 15_000 });
    expect(hardware.credentialIds()).toHaveLength(1);
    expect((await store.keyRing.slotSummary()).hardwareUserIds).toEqual([AMARA.id]);
  });

  it('says in words when the screen lock is not confirmed, and keeps no PIN', async () => {
    const hardware = fakeHardware();
    const store = await pinScreen({ hardware });
    const user = userEvent.setup();
    await screen.findByText(/your PIN opens the tablet’s data only together with it/);
    hardware.cancelNext();
    await save(user, 'New PIN (at least 6 digits)', '482913');
    expect((await screen.findByRole('alert', {}, { timeout: 15_000 })).textContent).toContain(
      'This tablet’s screen lock did not confirm you',
    );
    expect(store.getSnapshot().people[0]?.hasPin).toBe(false);
  });
});
