import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { cleanup, render, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import type { ReactNode } from 'react';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { SessionContext } from '../../auth/session-context';
import { RepositoriesProvider } from '../../data/data-context';
import { FuselightDb } from '../../data/db';
import { OutboxRepository } from '../../data/outbox-repository';
import { RecordsRepository } from '../../data/records-repository';
import {
  CLINICIAN_ID,
  DEVICE_ID,
  OTHER_CLINICIAN_ID,
  SITE_ID,
  patientFields,
} from '../../data/test-fixtures';
import OutboxScreen from './OutboxScreen';

let db: FuselightDb;
let records: RecordsRepository;
let outbox: OutboxRepository;

const user = {
  id: CLINICIAN_ID,
  name: 'Ife Adeyemi',
  email: 'ife@clinic.test',
  role: 'orthoptist' as const,
  siteIds: [SITE_ID],
};

function renderScreen(): void {
  const queryClient = new QueryClient({ defaultOptions: { queries: { retry: false } } });
  const wrap = (node: ReactNode) => (
    <QueryClientProvider client={queryClient}>
      <SessionContext.Provider value={{ user, deviceId: DEVICE_ID, activeSiteId: SITE_ID }}>
        <RepositoriesProvider value={{ records, outbox }}>{node}</RepositoriesProvider>
      </SessionContext.Provider>
    </QueryClientProvider>
  );
  render(wrap(<OutboxScreen />));
}

const ctx = (authorId = CLINICIAN_ID) => ({ authorId, deviceId: DEVICE_ID, nowMs: Date.now() });

async function rejectedPatient(
  authorId = CLINICIAN_ID,
  error = 'Clinic number FL-000123 is already in use at this site',
) {
  const id = await records.create('patient', patientFields(), ctx(authorId));
  const entry = (await outbox.listEntries()).find((e) => e.recordId === id)!;
  await db.outbox.update(entry.changeId, { state: 'rejected', error, attempts: 1 });
  return { id, changeId: entry.changeId };
}

beforeEach(() => {
  db = new FuselightDb(`outbox-screen-${crypto.randomUUID()}`);
  records = new RecordsRepository(db);
  outbox = new OutboxRepository(db);
});

afterEach(async () => {
  cleanup();
  db.close();
  await db.delete();
});

/** The Outbox says in words that nothing waits, and lists no entry. */
async function expectNothingWaiting() {
  await waitFor(() =>
    expect(document.body.textContent).toContain(
      'Nothing is waiting: every edit saved on this tablet has reached the clinic server.',
    ),
  );
  expect(screen.queryAllByRole('listitem')).toEqual([]);
}

describe('the Outbox screen', () => {
  it('says in words that nothing is waiting when the Outbox is empty', async () => {
    renderScreen();
    await expectNothingWaiting();
  });

  it('lists waiting edits with their fields in the trade’s words', async () => {
    await records.create('patient', patientFields({ familyName: 'Eze' }), ctx());
    renderScreen();
    const waiting = await screen.findByRole(
      'region',
      { name: 'Waiting to be sent (1)' },
      { timeout: 5000 },
    );
    const items = within(waiting).getAllByRole('listitem');
    expect(items).toHaveLength(1);
    expect(items[0]!.querySelector('h3')?.textContent).toBe('Patient details');
    expect(items[0]!.querySelector('p')?.textContent).toMatch(/Family name: Eze/);
    expect(screen.queryByRole('button', { name: 'Discard' })).toBeNull();
  });

  it('shows a refused edit with the server’s reason, and discards it only after confirmation, with undo', async () => {
    const { id } = await rejectedPatient();
    renderScreen();
    const section = await screen.findByRole('region', { name: 'Refused by the server (1)' });
    expect(within(section).getByRole('note').textContent).toMatch(
      /^The clinic server refused this edit: .*already in use at this site/,
    );
    await userEvent.click(within(section).getByRole('button', { name: 'Discard' }));
    // Nothing is gone yet: the person must confirm.
    expect(await db.outbox.count()).toBe(1);
    await userEvent.click(screen.getByRole('button', { name: 'Keep it' }));
    expect(await db.outbox.count()).toBe(1);
    await userEvent.click(within(section).getByRole('button', { name: 'Discard' }));
    await userEvent.click(screen.getByRole('button', { name: 'Yes, discard' }));
    await waitFor(async () => expect(await db.outbox.count()).toBe(0));
    expect(await records.get('patient', id)).toBeUndefined();
    await expectNothingWaiting();
    await userEvent.click(screen.getByRole('button', { name: 'Undo' }));
    await waitFor(async () => expect(await db.outbox.count()).toBe(1));
    expect((await records.get('patient', id))?.fields.familyName).toBe('Okafor');
    const back = await screen.findByRole('region', { name: 'Refused by the server (1)' });
    expect(within(back).getByRole('note').textContent).toMatch(/already in use at this site/);
  });

  it('fixes a refused edit: a still-invalid value is named, a valid one sends it again', async () => {
    const { changeId } = await rejectedPatient();
    renderScreen();
    await userEvent.click(await screen.findByRole('button', { name: 'Fix' }));
    const clinicNumber = screen.getByLabelText('Clinic number');
    await userEvent.clear(clinicNumber);
    await userEvent.click(screen.getByRole('button', { name: 'Save and send again' }));
    // The sync bar's own alert is there from the start: wait for the field's message itself.
    await waitFor(() =>
      expect(
        screen
          .getAllByRole('alert')
          .map((a) => a.textContent)
          .join(' '),
      ).toMatch(/Clinic number/),
    );
    expect((await db.outbox.get(changeId))?.state).toBe('rejected');
    await userEvent.type(clinicNumber, 'FL-777');
    await userEvent.click(screen.getByRole('button', { name: 'Save and send again' }));
    await waitFor(async () => {
      const entries = await outbox.listEntries();
      expect(entries).toHaveLength(1);
      expect(entries[0]).toMatchObject({ state: 'pending', fields: { clinicNumber: 'FL-777' } });
    });
    const waiting = await screen.findByRole('region', { name: 'Waiting to be sent (1)' });
    expect(within(waiting).getAllByRole('listitem')).toHaveLength(1);
    expect(screen.queryByRole('region', { name: /^Refused by the server/ })).toBeNull();
  });

  it('says how long the oldest entry has waited', async () => {
    const id = await records.create('patient', patientFields(), ctx());
    const entry = (await outbox.listEntries()).find((e) => e.recordId === id)!;
    await db.outbox.update(entry.changeId, { createdAt: Date.now() - 2 * 3_600_000 - 5 * 60_000 });
    renderScreen();
    expect((await screen.findByTestId('outbox-oldest')).textContent).toBe(
      'The oldest entry has waited 2 hours 5 minutes.',
    );
  });

  it('keeps another person’s refused edit visible but leaves fixing it to them', async () => {
    await rejectedPatient(OTHER_CLINICIAN_ID);
    renderScreen();
    const section = await screen.findByRole('region', { name: 'Refused by the server (1)' });
    await waitFor(() =>
      expect(section.textContent).toContain(
        'Only the person who made this edit can fix or discard it.',
      ),
    );
    expect(within(section).queryByRole('button', { name: 'Discard' })).toBeNull();
    expect(screen.queryByRole('button', { name: 'Fix' })).toBeNull();
  });

  it('gives every action button a touch target of at least 48 px', async () => {
    await rejectedPatient();
    renderScreen();
    for (const name of ['Fix', 'Discard']) {
      const button = await screen.findByRole('button', { name });
      expect(parseInt(button.style.minHeight, 10)).toBeGreaterThanOrEqual(48);
    }
  });
});
