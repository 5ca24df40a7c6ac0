import { cleanup, screen, waitFor } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { AMARA, PASSWORDS, TOMASZ, fakeClinicServer } from '../../auth/fake-clinic-server.fixture';
import { renderWithSession, storeOn } from '../../auth/session-screen.fixture';
import { eraseAllDatabases } from '../../auth/tablet-erasure';
import { fakeHardware, type FakeHardware } from '../../data/crypto/fake-hardware.fixture';
import UnlockScreen from './UnlockScreen';

beforeEach(async () => {
  await eraseAllDatabases();
});
afterEach(cleanup);

async function tabletWithTwoPeople(hardware?: FakeHardware) {
  const server = fakeClinicServer(() => Date.now());
  const store = storeOn(server, hardware ? { hardware } : {});
  await store.load();
  await store.enrol(server.enrolmentCode);
  await store.signIn({ email: AMARA.email, password: PASSWORDS[AMARA.email]! });
  await store.setPin('515151');
  await store.switchPerson();
  await store.signIn({ email: TOMASZ.email, password: PASSWORDS[TOMASZ.email]! });
  await store.switchPerson();
  renderWithSession(store, <UnlockScreen />, { at: '/unlock' });
  return store;
}

describe('the person switcher', () => {
  it('names each person’s sites as the server named them', async () => {
    const store = await tabletWithTwoPeople();
    await store.unlock(AMARA.id, '515151');
    await store.refreshSites();
    await store.switchPerson();
    const people = screen.getByRole('list', { name: 'People on this tablet' });
    await waitFor(() =>
      expect(
        [...people.querySelectorAll('li')].map((li) => [
          li.querySelector('strong')?.textContent,
          li.querySelector('.fl-id-hint')?.textContent,
        ]),
      ).toContainEqual(['Amara Lindqvist', 'Harbourview Eye Clinic, Saltmarsh School (outreach)']),
    );
  });

  it('lists everyone on the tablet and unlocks the chosen person with their PIN', async () => {
    const store = await tabletWithTwoPeople();
    const user = userEvent.setup();
    // Tomasz has no PIN, so he signs in with his password instead.
    expect(
      (await screen.findByRole('link', { name: 'Sign in as Tomasz Okonjo' })).getAttribute('href'),
    ).toBe(`/signin?email=${encodeURIComponent(TOMASZ.email)}`);
    await user.click(screen.getByRole('button', { name: 'Unlock as Amara Lindqvist' }));
    await user.type(screen.getByLabelText('PIN for Amara Lindqvist'), '999999');
    await user.click(screen.getByRole('button', { name: 'Unlock' }));
    await waitFor(() =>
      expect(screen.getByRole('alert').textContent).toBe('That PIN is not right. 4 attempts left.'),
    );
    await user.type(screen.getByLabelText('PIN for Amara Lindqvist'), '515151');
    await user.click(screen.getByRole('button', { name: 'Unlock' }));
    await waitFor(() => expect(document.body.textContent).toBe('Home'));
    expect(store.getSnapshot().activeUser?.id).toBe(AMARA.id);
  });

  it('says in words when the screen lock’s key is gone, offers a password sign-in, and loses nothing', async () => {
    const hardware = fakeHardware();
    const store = await tabletWithTwoPeople(hardware);
    const slotsBefore = await store.keyRing.slotSummary();
    expect(slotsBefore.hardwareUserIds).toEqual([AMARA.id]);
    const user = userEvent.setup();
    // The screen lock was reset: the credential the PIN's slot needs is gone.
    hardware.remove(hardware.credentialIds()[0]!);
    await user.click(await screen.findByRole('button', { name: 'Unlock as Amara Lindqvist' }));
    await user.type(screen.getByLabelText('PIN for Amara Lindqvist'), '515151');
    await user.click(screen.getByRole('button', { name: 'Unlock' }));
    await waitFor(() =>
      expect(screen.getByRole('alert').textContent).toContain(
        'This tablet’s screen lock did not confirm you',
      ),
    );
    expect(screen.getByRole('alert').textContent).toContain('nothing on this tablet is lost');
    expect(
      screen.getByRole('link', { name: 'Sign in with your password' }).getAttribute('href'),
    ).toBe(`/signin?email=${encodeURIComponent(AMARA.email)}`);
    // Not counted as a wrong PIN, nobody unlocked, every slot still there.
    expect(document.body.textContent).toContain('5 PIN attempts left');
    expect(store.getSnapshot().activeUser).toBeNull();
    expect(await store.keyRing.slotSummary()).toEqual(slotsBefore);
    // An online sign-in opens the key with the server's slot.
    await store.signIn({ email: AMARA.email, password: PASSWORDS[AMARA.email]! });
    expect(store.keyRing.vault.unlocked).toBe(true);
    // …and offers to set the PIN again, since its screen-lock key did not answer.
    expect(store.getSnapshot().pinOfferFor).toBe(AMARA.id);
    expect(store.getSnapshot().people.find((p) => p.user.id === AMARA.id)?.pinHardwareRefused).toBe(
      true,
    );
  });
});
