// A sealed record with one flipped byte on fake-indexeddb: the screen says so in words, the other
// records read as before, and the next sync fetches a good copy (a full re-pull, since the record's
// version is behind the cursor), which clears the note.
import { cleanup, render, screen, waitFor } from '@testing-library/react';
import { afterEach, describe, expect, it } from 'vitest';
import { DataKeyVault } from '../data/crypto/data-key-vault';
import { newDataKey } from '../data/crypto/key-slots';
import { flipSealedByte, rawDump } from '../data/crypto/raw-dump.fixture';
import { FuselightDb, type StoredRecord } from '../data/db';
import { RecordsRepository } from '../data/records-repository';
import { CLINICIAN_ID, DEVICE_ID, SITE_ID, patientFields } from '../data/test-fixtures';
import { CURSOR_KEY } from '../sync/local-apply';
import { SyncEngine } from '../sync/sync-engine';
import { DamagedValuesNote } from './DamagedValuesNote';

const opened: FuselightDb[] = [];
afterEach(async () => {
  cleanup();
  for (const db of opened.splice(0)) {
    db.close();
    await db.delete();
  }
});

const DAMAGED_ID = '0190c6d1-5c00-7000-8000-00000000beef';
const INTACT_ID = '0190c6d1-5c00-7000-8000-0000000c0ffe';

function pulled(id: string, fields: Record<string, unknown>, version: number): StoredRecord {
  return {
    collection: 'patient',
    id,
    version,
    deleted: false,
    fields,
    conflicts: [],
    pendingFields: [],
    serverFields: {},
    updatedAt: 1_764_576_000_000,
  };
}

describe('a stored value that fails authentication', () => {
  it('is reported in words, loses nothing else, and a later pull brings a good copy', async () => {
    const vault = new DataKeyVault();
    vault.hold(await newDataKey());
    const db = new FuselightDb(`damaged-${crypto.randomUUID()}`, vault);
    opened.push(db);
    const records = new RecordsRepository(db);
    const good = patientFields({ siteId: SITE_ID, familyName: 'Boateng' });
    // Versions of different lengths; the cursor is past both.
    await db.records.bulkPut([
      pulled(DAMAGED_ID, good, 998_001),
      pulled(INTACT_ID, patientFields({ siteId: SITE_ID, familyName: 'Mensah' }), 1_000_002),
    ]);
    await db.meta.put({ key: CURSOR_KEY, value: 1_000_002 });
    db.close();
    await flipSealedByte(db.name, 'records', ['patient', DAMAGED_ID]);
    await db.open();

    // The damaged record is left out; the other reads as before.
    expect((await records.list('patient')).map((p) => p.fields.familyName)).toEqual(['Mensah']);
    render(<DamagedValuesNote vault={vault} />);
    expect(screen.getByRole('alert').textContent).toBe(
      'Part of this tablet’s copy of a patient record (id ending 00beef) could not be read: it was altered or damaged in the tablet’s storage, so it is not shown. Nothing else is affected, and unsent edits stay in the Outbox. The next sync fetches a good copy from the clinic server.',
    );

    const asked: string[] = [];
    const engine = new SyncEngine({
      db,
      baseUrl: 'http://clinic.invalid',
      auth: { tokenFor: async () => 'token', onUnauthorized: async () => undefined },
      deviceId: DEVICE_ID,
      pullAs: () => CLINICIAN_ID,
      network: { isOnline: () => true, subscribe: () => () => undefined },
      random: () => 0.5,
      yieldToUi: async () => undefined,
      fetch: async (input) => {
        const url = String(input);
        asked.push(url.replace('http://clinic.invalid', ''));
        const after = Number(new URL(url).searchParams.get('after'));
        // The server holds both records; a pull after the cursor brings neither.
        const all = [
          { id: DAMAGED_ID, fields: good, version: 998_001 },
          {
            id: INTACT_ID,
            fields: patientFields({ siteId: SITE_ID, familyName: 'Mensah' }),
            version: 1_000_002,
          },
        ].filter((r) => r.version > after);
        return new Response(
          JSON.stringify({
            records: all.map((r) => ({
              collection: 'patient',
              ...r,
              deleted: false,
              stamps: {},
              conflicts: [],
            })),
            cursor: all.at(-1)?.version ?? after,
            more: false,
          }),
          { headers: { 'Content-Type': 'application/json' } },
        );
      },
    });
    const outcome = await engine.syncOnce();
    expect(outcome).toMatchObject({ kind: 'synced', pulled: 2 });
    expect(asked).toEqual(['/api/sync/pull?after=0&limit=1000']);
    expect(engine.snapshot().fullRepull).toMatchObject({ reason: 'damaged', received: 2 });

    // The good copy is readable, sealed again, and the note is gone.
    expect((await records.get('patient', DAMAGED_ID))?.fields).toEqual(good);
    expect((await records.list('patient')).map((p) => p.fields.familyName).sort()).toEqual([
      'Boateng',
      'Mensah',
    ]);
    expect((await rawDump(db.name)).text).not.toContain('Boateng');
    await waitFor(() => expect(screen.queryByRole('alert')).toBeNull());
    expect(vault.damagedValues()).toEqual([]);

    // A later sync does not start over again.
    asked.length = 0;
    await engine.syncOnce();
    expect(asked).toEqual(['/api/sync/pull?after=1000002&limit=1000']);
  });
});
