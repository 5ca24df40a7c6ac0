// Test harness for the Bench: its own fake-indexeddb database, a signed-in clinician, a patient
// and a draft visit, and the Bench rendered at a chosen step.
import type { CollectionName, RecordFieldsInput, SessionUser } from '@fuselight/shared';
import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { render } from '@testing-library/react';
import { MemoryRouter, Route, Routes } from 'react-router-dom';
import { SessionContext } from '../../auth/session-context';
import { FuselightDb } from '../../data/db';
import { OutboxRepository } from '../../data/outbox-repository';
import { RecordsRepository } from '../../data/records-repository';
import { RepositoriesProvider } from '../../data/data-context';
import {
  CLINICIAN_ID,
  DEVICE_ID,
  SITE_ID,
  patientFields,
  visitFields,
} from '../../data/test-fixtures';
import { Bench } from './BenchScreen';

export const clinician: SessionUser = {
  id: CLINICIAN_ID,
  name: 'Noor Test',
  email: 'noor@clinic.invalid',
  role: 'orthoptist',
  siteIds: [SITE_ID],
};

export async function benchFixture() {
  const db = new FuselightDb(`bench-${crypto.randomUUID()}`);
  const records = new RecordsRepository(db);
  const outbox = new OutboxRepository(db);
  const ctx = () => ({ authorId: CLINICIAN_ID, deviceId: DEVICE_ID, nowMs: Date.now() });
  const patientId = await records.create('patient', patientFields(), ctx());
  const visitId = await records.create('visit', visitFields(patientId), ctx());
  const seed = async <C extends CollectionName>(
    collection: C,
    fields: Partial<RecordFieldsInput<C>>,
  ) =>
    records.create(
      collection,
      { siteId: SITE_ID, visitId, patientId, ...fields } as RecordFieldsInput<C>,
      ctx(),
    );
  const section = async (collection: CollectionName) =>
    (await records.listByField(collection, 'visitId', visitId))[0]?.fields as
      Record<string, unknown> | undefined;
  const queryClient = new QueryClient({
    defaultOptions: { queries: { retry: false, networkMode: 'always' } },
  });
  const renderBench = (step: string, random?: () => number) => {
    return render(
      <QueryClientProvider client={queryClient}>
        <RepositoriesProvider value={{ records, outbox }}>
          <SessionContext.Provider
            value={{ user: clinician, deviceId: DEVICE_ID, activeSiteId: SITE_ID }}
          >
            <MemoryRouter initialEntries={[`/bench/${visitId}?step=${step}`]}>
              <Routes>
                <Route
                  path="/bench/:visitId"
                  element={<Bench visitId={visitId} {...(random ? { random } : {})} />}
                />
              </Routes>
            </MemoryRouter>
          </SessionContext.Provider>
        </RepositoriesProvider>
      </QueryClientProvider>,
    );
  };
  const close = async () => {
    db.close();
    await db.delete();
  };
  return {
    db,
    records,
    outbox,
    patientId,
    visitId,
    seed,
    section,
    renderBench,
    queryClient,
    close,
  };
}

/** Replays a fixed list of draws in [0, 1) as the trial order's randomness. */
export function scriptedRandom(draws: number[]): () => number {
  let i = 0;
  return () => draws[i++ % draws.length]!;
}
