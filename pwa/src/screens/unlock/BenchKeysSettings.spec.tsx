// The You screen's Bench keys: remapping by pressing a key, a key that already does something
// else refused in words, reset to the defaults after asking, all kept per person on the tablet.
import { act, cleanup, render, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import type { SessionUser } from '@fuselight/shared';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { AuthDb } from '../../auth/auth-db';
import { PersonSettings, personSettingKey, setPersonSettings } from '../../auth/person-settings';
import { SessionContext } from '../../auth/session-context';
import { CLINICIAN_ID, OTHER_CLINICIAN_ID, SITE_ID } from '../../data/test-fixtures';
import { DEFAULT_BENCH_KEYS, preferencesFromStored } from '../bench/keys/bench-key-map';
import { BENCH_KEYS_SETTING } from '../bench/keys/useBenchKeyPreferences';
import { BenchKeysSettings } from './BenchKeysSettings';

const person = (id: string, name: string): SessionUser => ({
  id,
  name,
  email: `${name.split(' ')[0]!.toLowerCase()}@clinic.invalid`,
  role: 'orthoptist',
  siteIds: [SITE_ID],
});
const noor = person(CLINICIAN_ID, 'Noor Test');
const ilse = person(OTHER_CLINICIAN_ID, 'Ilse Test');

let db: AuthDb;

beforeEach(() => {
  db = new AuthDb(`bench-keys-${crypto.randomUUID()}`);
  setPersonSettings(new PersonSettings(() => db));
});
afterEach(async () => {
  cleanup();
  setPersonSettings(null);
  db.close();
  await db.delete();
});

function renderFor(user: SessionUser) {
  return render(
    <SessionContext.Provider value={{ user, deviceId: null, activeSiteId: SITE_ID }}>
      <BenchKeysSettings />
    </SessionContext.Provider>,
  );
}

const row = (action: string) => document.querySelector<HTMLElement>(`tr[data-action="${action}"]`)!;
const keysOf = (action: string) =>
  [...row(action).querySelectorAll('kbd')].map((kbd) => kbd.textContent);
const stored = async (userId: string) =>
  preferencesFromStored(
    (await db.settings.get(personSettingKey(userId, BENCH_KEYS_SETTING)))?.value,
  );

describe('Bench keys on the You screen', () => {
  it('starts from the defaults for pedals, clickers and the keypad', async () => {
    renderFor(noor);
    await screen.findByRole('table', { name: 'Your Bench keys' });
    expect(keysOf('stepUpMedium')).toEqual(['Page Down', '↑', 'Keypad 8']);
    expect(keysOf('markBreak')).toEqual(['B', 'Keypad 0']);
    expect(keysOf('markRecovery')).toEqual(['.', 'Keypad .', 'R']);
    expect(keysOf('markLost')).toEqual(['F5', 'Keypad Enter', 'L']);
    expect(
      (
        screen.getByRole('checkbox', {
          name: 'Say each recorded value aloud on the Bench',
        }) as HTMLInputElement
      ).checked,
    ).toBe(false);
  });

  it('remaps an action by the key pressed and keeps it for that person only', async () => {
    const user = userEvent.setup();
    renderFor(noor);
    await screen.findByRole('table', { name: 'Your Bench keys' });
    await user.click(screen.getByRole('button', { name: 'Add a key for Next step' }));
    screen.getByRole('button', { name: 'Press the new key for Next step (Esc to cancel)' });
    await user.keyboard('[KeyN]');
    await screen.findByText('N now does “Next step”.');
    expect(keysOf('nextStep')).toEqual(['Keypad +', ']', 'N']);
    await user.click(screen.getByRole('button', { name: 'Remove ] from Next step' }));
    await screen.findByText('] no longer does “Next step”.');
    await waitFor(async () =>
      expect((await stored(CLINICIAN_ID)).keys.nextStep).toEqual(['NumpadAdd', 'KeyN']),
    );

    // Another person on the same tablet keeps the defaults.
    cleanup();
    renderFor(ilse);
    await screen.findByRole('table', { name: 'Your Bench keys' });
    expect(keysOf('nextStep')).toEqual(['Keypad +', ']']);
    expect(await db.settings.get(personSettingKey(OTHER_CLINICIAN_ID, BENCH_KEYS_SETTING))).toBe(
      undefined,
    );
  });

  it('refuses a key that already does another action, saying which, and changes nothing', async () => {
    const user = userEvent.setup();
    renderFor(noor);
    await screen.findByRole('table', { name: 'Your Bench keys' });
    await user.click(screen.getByRole('button', { name: 'Add a key for Next step' }));
    await user.keyboard('{PageDown}');
    expect(screen.getByRole('alert').textContent).toBe(
      'Page Down already does “+1 (or the next answer)”. One key does one thing: remove it there first.',
    );
    expect(keysOf('nextStep')).toEqual(['Keypad +', ']']);
    expect(keysOf('stepUpMedium')).toEqual(['Page Down', '↑', 'Keypad 8']);
    expect(await db.settings.get(personSettingKey(CLINICIAN_ID, BENCH_KEYS_SETTING))).toBe(
      undefined,
    );

    // Shift with a key is a key of its own; Enter is kept for pressing buttons.
    await user.click(screen.getByRole('button', { name: 'Add a key for Undo the last entry' }));
    await user.keyboard('{Shift>}{ArrowUp}{/Shift}');
    expect(screen.getByRole('alert').textContent).toBe(
      'Shift+↑ already does “+5”. One key does one thing: remove it there first.',
    );
    await user.click(screen.getByRole('button', { name: 'Add a key for Undo the last entry' }));
    await user.keyboard('{Enter}');
    expect(screen.getByRole('alert').textContent).toBe(
      'Enter cannot be a Bench key: it moves between and presses the buttons on screen.',
    );
    expect(keysOf('undo')).toEqual(['Backspace', 'Ctrl+Z']);
  });

  it('resets every key to the defaults after asking, keeping the spoken-values choice', async () => {
    const user = userEvent.setup();
    await db.settings.put({
      key: personSettingKey(CLINICIAN_ID, BENCH_KEYS_SETTING),
      value: {
        keys: { ...DEFAULT_BENCH_KEYS, markBreak: ['KeyX'], nextStep: [] },
        speak: true,
        legend: false,
      },
    });
    renderFor(noor);
    await screen.findByRole('table', { name: 'Your Bench keys' });
    expect(keysOf('markBreak')).toEqual(['X']);
    expect(within(row('nextStep')).getByText('no key')).toBeDefined();
    await user.click(screen.getByRole('button', { name: 'Reset Bench keys to the defaults' }));
    const dialog = screen.getByRole('alertdialog', { name: 'Reset your Bench keys?' });
    await user.click(within(dialog).getByRole('button', { name: 'Cancel' }));
    expect(keysOf('markBreak')).toEqual(['X']);

    await user.click(screen.getByRole('button', { name: 'Reset Bench keys to the defaults' }));
    await user.click(screen.getByRole('button', { name: 'Reset keys' }));
    await screen.findByText('Bench keys are back to the defaults.');
    expect(keysOf('markBreak')).toEqual(['B', 'Keypad 0']);
    const after = await stored(CLINICIAN_ID);
    expect(after.keys).toEqual(DEFAULT_BENCH_KEYS);
    expect(after.speak).toBe(true);
    expect(after.legend).toBe(false);
    expect(
      (
        screen.getByRole('button', {
          name: 'Reset Bench keys to the defaults',
        }) as HTMLButtonElement
      ).disabled,
    ).toBe(true);
  });

  it('reads a stored mapping that names one key twice by keeping it with the first action', async () => {
    await act(async () => {
      await db.settings.put({
        key: personSettingKey(CLINICIAN_ID, BENCH_KEYS_SETTING),
        value: { keys: { nextStep: ['KeyN'], previousStep: ['KeyN', 'KeyP'] } },
      });
    });
    renderFor(noor);
    await screen.findByRole('table', { name: 'Your Bench keys' });
    expect(keysOf('nextStep')).toEqual(['N']);
    expect(keysOf('previousStep')).toEqual(['P']);
    expect(keysOf('markBreak')).toEqual(['B', 'Keypad 0']);
  });
});
