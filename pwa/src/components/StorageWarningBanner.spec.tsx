import { cleanup, render, screen } from '@testing-library/react';
import { afterEach, describe, expect, it } from 'vitest';
import { OldestEntryWait } from '../screens/outbox/OutboxScreen';
import { StorageNote } from '../screens/unlock/PersonScreen';
import type { StorageHealth } from '../storage/storage-health';
import { StorageWarningText } from './StorageWarningBanner';

afterEach(cleanup);

const HOUR = 3_600_000;
const health = (over: Partial<StorageHealth> = {}): StorageHealth => ({
  persistenceSupported: true,
  persisted: true,
  usage: 1_300_000_000,
  quota: 10_000_000_000,
  usedShare: 0.13,
  nearlyFull: false,
  ...over,
});

describe('the app-wide storage warning', () => {
  it('shows nothing while edits are recent, storage is persistent and there is room', () => {
    const { container } = render(
      <StorageWarningText
        warnings={{ unsynced: null, persistenceRefused: false, nearlyFull: null }}
      />,
    );
    expect(container.textContent).toBe('');
    expect(screen.queryByRole('alert')).toBeNull();
  });

  it('says how long edits have waited against the clinic’s setting, and what to do', () => {
    render(
      <StorageWarningText
        warnings={{
          unsynced: { waitedMs: 26 * HOUR + 5 * 60_000, warningHours: 24 },
          persistenceRefused: false,
          nearlyFull: null,
        }}
      />,
    );
    expect(screen.getByRole('alert').textContent).toBe(
      'Edits on this tablet have waited 1 day 2 hours without reaching the clinic server; the clinic allows 24 hours. Until they are sent they exist only on this tablet, and a browser may clear its storage. Connect to the clinic’s network and sync; the Outbox shows what waits.',
    );
    expect(screen.getByRole('region', { name: 'Storage warning' })).toBeDefined();
  });

  it('says that the browser refused persistent storage, and how full the storage is', () => {
    render(
      <StorageWarningText
        warnings={{
          unsynced: null,
          persistenceRefused: true,
          nearlyFull: health({ usedShare: 0.86, nearlyFull: true }),
        }}
      />,
    );
    const lines = [...screen.getByRole('alert').querySelectorAll('p')].map((p) => p.textContent);
    expect(lines).toEqual([
      'This browser has not granted Fuselight persistent storage, so it may clear what is kept on this tablet, unsent edits included, when space runs short or after days without use. Sync often; installing Fuselight on the home screen usually lets the browser keep its storage.',
      'This tablet’s storage is 86 % full. When it is full, edits cannot be saved: sync, and free space on the tablet.',
    ]);
  });
});

describe('storage on the You screen', () => {
  it('says persistent storage was granted, with usage and quota, and no warning below 80 %', () => {
    render(<StorageNote health={health({ usedShare: 0.79, usage: 7_900, quota: 10_000 })} />);
    const region = screen.getByRole('region', { name: 'Storage on this tablet' });
    expect([...region.querySelectorAll('p')].map((p) => p.textContent)).toEqual([
      'Persistent storage: granted. The browser keeps what is stored on this tablet until Fuselight removes it.',
      '7.9 kB used of 10.0 kB (79 %).',
    ]);
    expect(screen.queryByRole('alert')).toBeNull();
  });

  it('says persistent storage was not granted, and warns from 80 %', () => {
    render(
      <StorageNote
        health={health({
          persisted: false,
          usage: 8_000,
          quota: 10_000,
          usedShare: 0.8,
          nearlyFull: true,
        })}
      />,
    );
    expect(screen.getByText(/^Persistent storage: not granted\./).textContent).toContain(
      'unsent edits included',
    );
    expect(screen.getByRole('alert').textContent).toBe(
      'The storage is 80 % full. When it is full, edits cannot be saved: sync to send the Outbox, and free space on the tablet.',
    );
  });

  it('says when the browser cannot tell', () => {
    render(
      <StorageNote
        health={health({
          persisted: null,
          persistenceSupported: false,
          usage: null,
          quota: null,
          usedShare: null,
        })}
      />,
    );
    const region = screen.getByRole('region', { name: 'Storage on this tablet' });
    expect(region.textContent).toContain(
      'This browser cannot say whether it keeps this tablet’s storage; sync often.',
    );
    expect(region.textContent).toContain(
      'This browser does not say how much storage Fuselight uses.',
    );
  });
});

describe('the Outbox’s oldest entry', () => {
  const now = Date.parse('2026-12-04T09:00:00.000Z');

  it('says how long it has waited', () => {
    render(
      <OldestEntryWait
        oldestCreatedAt={now - 3 * HOUR - 20 * 60_000}
        nowMs={now}
        warningHours={24}
      />,
    );
    expect(screen.getByTestId('outbox-oldest').textContent).toBe(
      'The oldest entry has waited 3 hours 20 minutes.',
    );
  });

  it('says when it has waited longer than the clinic allows', () => {
    render(<OldestEntryWait oldestCreatedAt={now - 7 * HOUR} nowMs={now} warningHours={6} />);
    expect(screen.getByTestId('outbox-oldest').textContent).toBe(
      'The oldest entry has waited 7 hours, longer than the 6 hours the clinic allows: sync as soon as the tablet can reach the clinic server.',
    );
  });
});
