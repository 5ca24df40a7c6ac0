// What a person reads when the tablet holds records from a newer version of the app: "Update
// available" in the sync bar (its label has the whole sentence) and a section on the You screen
// with a button that looks for the new version.
import { cleanup, render, screen, waitFor } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { describeUpdateCheck, lookForAppUpdate } from '../app/app-update';
import { FuselightDb } from '../data/db';
import { CLINICIAN_ID, DEVICE_ID, SITE_ID } from '../data/test-fixtures';
import { SyncEngine } from '../sync/sync-engine';
import { SyncIndicator } from './SyncIndicator';
import { UpdateAvailableNote } from './UpdateAvailableNote';

const dbs: FuselightDb[] = [];
afterEach(async () => {
  cleanup();
  for (const db of dbs.splice(0)) {
    db.close();
    await db.delete();
  }
});

const NOTE_WORDS =
  'An update of Fuselight is available. This tablet has received 1 kind of record from a newer ' +
  'version of the app that this version cannot show yet. They are kept exactly as they came and ' +
  'nothing is lost; syncing goes on. Update the app to see them.';

/** An engine that has pulled one record of a collection no build here knows. */
async function engineWithNewerRecord() {
  const db = new FuselightDb(`update-note-${crypto.randomUUID()}`);
  dbs.push(db);
  const record = {
    collection: 'orthopticExercise',
    id: '0190c6d1-0000-7000-8000-000000000f01',
    version: 1_000_000_001,
    deleted: false,
    fields: { siteId: SITE_ID, exercise: 'Pencil push-ups' },
    stamps: {},
    conflicts: [],
  };
  const engine = new SyncEngine({
    db,
    baseUrl: 'http://clinic.invalid',
    auth: { tokenFor: async () => 'token', onUnauthorized: async () => undefined },
    deviceId: DEVICE_ID,
    pullAs: () => CLINICIAN_ID,
    fetch: async (input) =>
      new Response(
        JSON.stringify(
          String(input).includes('after=0')
            ? { records: [record], cursor: record.version, more: false }
            : { records: [], cursor: record.version, more: false },
        ),
        { status: 200 },
      ),
    timers: { setTimeout: () => null, clearTimeout: () => undefined },
    network: { isOnline: () => true, subscribe: () => () => undefined },
    yieldToUi: () => Promise.resolve(),
  });
  expect(await engine.syncOnce()).toMatchObject({ kind: 'synced', pulled: 1 });
  return engine;
}

describe('the update available wording', () => {
  it('shows "Update available" in the sync bar, with the whole sentence in its label', async () => {
    const engine = await engineWithNewerRecord();
    render(<SyncIndicator engine={engine} />);
    expect(screen.getByRole('status').textContent).toMatch(
      /^Online· Outbox empty· Synced just now· Update available$/,
    );
    expect(screen.getByRole('region').getAttribute('aria-label')).toBe(
      `Sync status: online, Outbox empty, Synced just now. ${NOTE_WORDS}`,
    );
    expect(screen.getByText('· Update available').getAttribute('title')).toBe(NOTE_WORDS);
  });

  it('says nothing of an update while every record is known', () => {
    const { container } = render(<UpdateAvailableNote note={null} />);
    expect(container.textContent).toBe('');
  });

  it('explains it on the You screen and looks for the new version on request', async () => {
    const engine = await engineWithNewerRecord();
    const look = vi.fn(async () => 'offline' as const);
    render(<UpdateAvailableNote note={engine.snapshot().newerRecords} lookForUpdate={look} />);
    const section = screen.getByRole('region', { name: 'Update available' });
    expect(section.querySelector('h2')?.textContent).toBe('Update available');
    expect(section.querySelector('p')?.textContent).toBe(NOTE_WORDS);

    await userEvent.click(screen.getByRole('button', { name: 'Look for the new version' }));

    expect(look).toHaveBeenCalledTimes(1);
    await waitFor(() =>
      expect(screen.getByRole('status').textContent).toBe(
        'Offline: the new version is looked for when the network returns.',
      ),
    );
  });

  it('looks through the service worker registration, and says why it could not', async () => {
    const update = vi.fn(async () => undefined);
    const container = {
      getRegistration: async () => ({ update }),
    } as unknown as ServiceWorkerContainer;
    expect(await lookForAppUpdate(container, () => true)).toBe('looked');
    expect(update).toHaveBeenCalledTimes(1);
    expect(await lookForAppUpdate(container, () => false)).toBe('offline');
    expect(await lookForAppUpdate(undefined, () => true)).toBe('no-service-worker');
    const failing = {
      getRegistration: async () => ({
        update: async () => Promise.reject(new TypeError('network down')),
      }),
    } as unknown as ServiceWorkerContainer;
    expect(await lookForAppUpdate(failing, () => true)).toBe('failed');
    expect(describeUpdateCheck('looked')).toBe(
      'Looked for the new version. When it has downloaded, Fuselight offers to update at the bottom of the screen.',
    );
  });
});
