import { act, cleanup, render, screen, waitFor } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { FuselightDb } from '../data/db';
import { RecordsRepository } from '../data/records-repository';
import { CLINICIAN_ID, DEVICE_ID, patientFields } from '../data/test-fixtures';
import { SyncEngine } from '../sync/sync-engine';
import { SyncStatusStore } from '../sync/sync-status';
import { describeLastSynced, describeRepullForBar, SyncIndicator } from './SyncIndicator';

const dbs: FuselightDb[] = [];
afterEach(async () => {
  cleanup();
  for (const db of dbs.splice(0)) {
    db.close();
    await db.delete();
  }
});

function engineWith(options: { online: boolean; fetch?: typeof fetch }) {
  const db = new FuselightDb(`indicator-${crypto.randomUUID()}`);
  dbs.push(db);
  const engine = new SyncEngine({
    db,
    baseUrl: 'http://clinic.invalid',
    auth: { tokenFor: async () => 'token', onUnauthorized: async () => undefined },
    deviceId: DEVICE_ID,
    pullAs: () => CLINICIAN_ID,
    network: { isOnline: () => options.online, subscribe: () => () => undefined },
    fetch: options.fetch ?? (async () => Promise.reject(new TypeError('network down'))),
    random: () => 0.5,
  });
  return { db, engine };
}

/** Which of the bar's icons is drawn (cloud done, cloud, cloud offline, warning). */
const shownIcon = () =>
  document.querySelector('.fl-sync-indicator [data-look]')?.getAttribute('data-look');

describe('the sync indicator', () => {
  it('shows offline, what waits in the Outbox, and never-synced, in words', async () => {
    const { db, engine } = engineWith({ online: false });
    await new RecordsRepository(db).create('patient', patientFields(), {
      authorId: CLINICIAN_ID,
      deviceId: DEVICE_ID,
      nowMs: Date.now(),
    });
    await engine.syncOnce();
    render(<SyncIndicator engine={engine} />);
    expect(screen.getByRole('status').textContent).toBe('Offline· 1 waiting· Not synced yet');
    expect(screen.getByRole('region').getAttribute('aria-label')).toBe(
      'Sync status: offline, 1 waiting, Not synced yet',
    );
    const button = screen.getByRole('button', { name: 'Sync now' });
    expect(parseInt(button.style.minHeight, 10)).toBeGreaterThanOrEqual(48);
  });

  it('shows the error in words after a failed sync and runs a sync on "Sync now"', async () => {
    const fetch = vi.fn(async () => Promise.reject(new TypeError('network down')));
    const { engine } = engineWith({ online: true, fetch });
    const { db } = { db: engine.db };
    await new RecordsRepository(db).create('patient', patientFields(), {
      authorId: CLINICIAN_ID,
      deviceId: DEVICE_ID,
      nowMs: Date.now(),
    });
    render(<SyncIndicator engine={engine} />);
    await userEvent.click(screen.getByRole('button', { name: 'Sync now' }));
    await waitFor(() =>
      expect(screen.getByRole('alert').textContent).toMatch(/could not be reached/),
    );
    expect(shownIcon()).toBe('problem');
    expect(fetch).toHaveBeenCalled();
    // The Outbox count is refreshed after the failure is shown.
    await waitFor(() =>
      expect(screen.getByRole('status').textContent).toMatch(/^Online· 1 waiting· /),
    );
    engine.stop();
  });

  it('says when changes arrive live, and when it only checks every 30 s', async () => {
    const { engine } = engineWith({ online: true });
    engine.status.update({ configured: true, live: 'live' });
    render(<SyncIndicator engine={engine} />);
    expect(screen.getByRole('status').textContent).toMatch(/^Online· Live· Outbox empty· /);
    expect(screen.getByRole('region').getAttribute('aria-label')).toMatch(
      /^Sync status: online, changes arrive live, Outbox empty, /,
    );
    act(() => engine.status.update({ live: 'waiting' }));
    expect(screen.getByRole('status').textContent).toMatch(
      /^Online· Checking every 30 s· Outbox empty· /,
    );
    act(() => engine.status.update({ online: false, live: 'off' }));
    expect(screen.getByRole('status').textContent).toMatch(/^Offline· Outbox empty· /);
  });

  it('draws no warning sign while online with an empty Outbox before sync has started', () => {
    // No engine yet: the tablet is not enrolled or nobody is signed in.
    render(<SyncIndicator engine={null} compact />);
    expect(shownIcon()).toBe('not-started');
    expect(screen.getByRole('status').textContent).toBe('Online· Sync not started');
    expect(screen.queryByRole('alert')).toBeNull();
    expect(
      screen.getByText(/^Sync starts once this tablet is enrolled/).classList.contains('fl-muted'),
    ).toBe(true);
  });

  it('draws the synced cloud, not a warning, while online with an empty Outbox', () => {
    const status = new SyncStatusStore({ configured: true, lastSyncedAt: Date.now() - 5_000 });
    render(<SyncIndicator engine={{ status } as unknown as SyncEngine} compact />);
    expect(shownIcon()).toBe('ok');
    expect(screen.getByRole('status').textContent).toBe('Online· Outbox empty');
    expect(screen.queryByRole('alert')).toBeNull();
  });

  it('describes the last sync time in words', () => {
    const now = new Date('2026-12-01T10:00:00').getTime();
    expect(describeLastSynced(null, now)).toBe('Not synced yet');
    expect(describeLastSynced(now - 10_000, now)).toBe('Synced just now');
    expect(describeLastSynced(now - 5 * 60_000, now)).toBe('Synced 5 min ago');
    expect(describeLastSynced(now - 3 * 60 * 60_000, now)).toMatch(/^Synced at /);
    expect(describeLastSynced(now - 3 * 24 * 60 * 60_000, now)).toMatch(/^Synced on /);
  });

  it('shows a full re-sync under way, and its end for a few minutes', () => {
    const { engine } = engineWith({ online: true });
    engine.status.update({
      fullRepull: { reason: 'cursor-epoch', startedAt: Date.now(), finishedAt: null, received: 42 },
    });
    const { unmount } = render(<SyncIndicator engine={engine} compact />);
    expect(screen.getByRole('status').textContent).toContain('Full re-sync: 42 received');
    unmount();
    engine.status.update({
      fullRepull: { reason: 'cursor-epoch', startedAt: 1, finishedAt: Date.now(), received: 42 },
    });
    render(<SyncIndicator engine={engine} />);
    expect(screen.getByRole('status').textContent).toMatch(
      /Full re-sync done at .*: 42 records received\./,
    );
    const now = Date.now();
    const done = {
      reason: 'horizon' as const,
      startedAt: 1,
      finishedAt: now - 11 * 60_000,
      received: 3,
    };
    expect(
      describeRepullForBar({ ...engine.status.getSnapshot(), fullRepull: done }, now, false),
    ).toBeNull();
    engine.stop();
  });
});
