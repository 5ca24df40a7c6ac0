// A tablet that no longer serves a site: its records, attachment files and letters go at the next
// contact, unsent Outbox entries stay and are pushed later, other sites' data is untouched, and
// the screens say so. On fake-indexeddb with the tablet's sealing in place.
import { cleanup, render, screen } from '@testing-library/react';
import { afterEach, describe, expect, it } from 'vitest';
import { AttachmentDb } from '../attachments/attachment-db';
import { SyncIndicator } from '../components/SyncIndicator';
import { SyncEngine } from '../sync/sync-engine';
import { DataKeyVault } from './crypto/data-key-vault';
import { newDataKey } from './crypto/key-slots';
import { FuselightDb, type StoredRecord } from './db';
import { RecordsRepository } from './records-repository';
import { applySiteScope, describeSiteRemoval, readSiteScope } from './site-scope';
import { CLINICIAN_ID, DEVICE_ID, OTHER_SITE_ID, SITE_ID, patientFields } from './test-fixtures';

const opened: Array<FuselightDb | AttachmentDb> = [];
afterEach(async () => {
  cleanup();
  for (const db of opened.splice(0)) {
    db.close();
    await db.delete();
  }
});

// Ids of different lengths of history: made on other tablets long ago and here today.
const id = (n: number) => `0190c6a0-0000-7000-8000-${n.toString(16).padStart(12, '0')}`;
const PULLED_AT = 1_764_576_000_000;

function pulled(
  collection: StoredRecord['collection'],
  recordId: string,
  fields: Record<string, unknown>,
  version: number,
): StoredRecord {
  return {
    collection,
    id: recordId,
    version,
    deleted: false,
    fields,
    conflicts: [],
    pendingFields: [],
    serverFields: {},
    updatedAt: PULLED_AT,
  };
}

async function tablet() {
  const vault = new DataKeyVault();
  vault.hold(await newDataKey());
  const db = new FuselightDb(`scope-${crypto.randomUUID()}`, vault);
  const files = new AttachmentDb(`scope-files-${crypto.randomUUID()}`, vault);
  opened.push(db, files);
  const records = new RecordsRepository(db);
  // What the tablet pulled of two sites: patients, a visit, attachments and a letter each.
  const bySite = (siteId: string, base: number) => {
    const patientId = id(base + 1);
    const visitId = id(base + 2);
    const placed = { siteId, patientId, visitId };
    return [
      pulled('patient', patientId, patientFields({ siteId }), 9_990_001 + base),
      pulled('visit', visitId, { siteId, patientId, startedAt: '2026-11-30T09:00:00Z' }, 743_001),
      pulled('attachment', id(base + 3), { ...placed, mimeType: 'image/jpeg' }, 1_000_001 + base),
      pulled('attachment', id(base + 4), { ...placed, mimeType: 'image/png' }, 1_000_002 + base),
      pulled('letter', id(base + 5), { ...placed, status: 'final' }, 12_000_001 + base),
    ];
  };
  const kept = bySite(SITE_ID, 0x100);
  const lost = bySite(OTHER_SITE_ID, 0x20000);
  await db.records.bulkPut([...kept, ...lost]);
  // Attachment files: every one cached, except one of the lost site taken here and not yet sent.
  const bytes = new Uint8Array([1, 2, 3, 4]).buffer;
  for (const record of [...kept, ...lost].filter((r) => r.collection === 'attachment')) {
    await files.files.put({
      attachmentId: record.id,
      sha256: 'a'.repeat(64),
      mimeType: 'image/jpeg',
      byteSize: 4,
      bytes,
      authorId: CLINICIAN_ID,
      createdAt: PULLED_AT,
    });
    const waiting = record.id === lost[3]!.id;
    await files.transfers.put({
      attachmentId: record.id,
      state: waiting ? 'waiting' : 'cached',
      attempts: 0,
      lastError: null,
      nextAttemptAt: 0,
    });
  }
  // An edit made here to a patient of the lost site, not yet sent.
  await records.update(
    'patient',
    lost[0]!.id,
    { givenName: 'Adwoa' },
    { authorId: CLINICIAN_ID, deviceId: DEVICE_ID, nowMs: PULLED_AT + 1000 },
  );
  return { db, files, vault, records, kept, lost };
}

describe('sites a tablet no longer serves', () => {
  it('removes the lost site’s records, attachment files and letters, and keeps its unsent edit', async () => {
    const { db, files, records, kept, lost } = await tablet();
    expect(await db.outbox.count()).toBe(1);

    const outcome = await applySiteScope({
      db,
      files,
      holdSiteIds: [SITE_ID],
      siteName: (siteId) => (siteId === OTHER_SITE_ID ? 'Riverside outreach' : null),
      nowMs: PULLED_AT + 5000,
      chunkSize: 3,
    });

    // Every record of the lost site is gone, of the other site none.
    for (const record of lost) {
      expect(await records.get(record.collection, record.id)).toBeUndefined();
    }
    for (const record of kept) {
      expect((await records.get(record.collection, record.id))?.fields).toEqual(record.fields);
    }
    expect((await records.list('patient')).map((p) => p.id)).toEqual([kept[0]!.id]);
    expect(await records.searchPatients('okafor')).toHaveLength(1);
    // Files: the cached one of the lost site went; the one not yet uploaded stays; the other
    // site's are untouched.
    expect((await files.files.toArray()).map((f) => f.attachmentId).sort()).toEqual(
      [kept[2]!.id, kept[3]!.id, lost[3]!.id].sort(),
    );
    expect(await files.transfers.get(lost[2]!.id)).toBeUndefined();
    // The unsent edit stays in the Outbox, whole.
    const [entry] = await db.outbox.toArray();
    expect(entry).toMatchObject({ recordId: lost[0]!.id, state: 'pending' });
    expect(entry!.fields).toEqual({ givenName: 'Adwoa' });

    expect(outcome.removal).toMatchObject({
      siteIds: [OTHER_SITE_ID],
      records: 5,
      attachments: 2,
      letters: 1,
      keptEdits: 1,
      keptFiles: 1,
    });
    expect(describeSiteRemoval(outcome.removal)).toBe(
      'Records of Riverside outreach were removed from this tablet because it no longer serves that site (with 2 attachments and 1 letter). 1 unsent edit is kept until it reaches the server. 1 file not yet uploaded is kept until it is sent.',
    );
    expect(await readSiteScope(db)).toMatchObject({
      holdSiteIds: [SITE_ID],
      removedSiteIds: [OTHER_SITE_ID],
    });
  });

  it('pushes the kept edit later, does not store the lost site’s records a pull still brings, and shows the words on the sync bar', async () => {
    const { db, files, lost, kept } = await tablet();
    const bodies: string[] = [];
    const answer = (body: unknown) =>
      new Response(JSON.stringify(body), { headers: { 'Content-Type': 'application/json' } });
    const fetch: typeof globalThis.fetch = async (input, init) => {
      const url = String(input);
      if (url.includes('/api/sync/push')) {
        const sent = JSON.parse(String(init?.body)) as { changes: { changeId: string }[] };
        bodies.push(String(init?.body));
        return answer({
          results: sent.changes.map((c) => ({
            changeId: c.changeId,
            status: 'applied',
            version: 20_000_001,
            conflicts: [],
          })),
          serverTime: new Date(PULLED_AT).toISOString(),
        });
      }
      // A session that began before the change may still be sent the lost site's records.
      return answer({
        records: [
          {
            collection: 'patient',
            id: lost[0]!.id,
            version: 20_000_001,
            deleted: false,
            fields: { ...lost[0]!.fields, givenName: 'Adwoa' },
            stamps: {},
            conflicts: [],
          },
          {
            collection: 'patient',
            id: id(0x999),
            version: 20_000_002,
            deleted: false,
            fields: patientFields({ siteId: SITE_ID, familyName: 'Mensah' }),
            stamps: {},
            conflicts: [],
          },
        ],
        cursor: 20_000_002,
        more: false,
      });
    };
    const engine = new SyncEngine({
      db,
      baseUrl: 'http://clinic.invalid',
      auth: { tokenFor: async () => 'token', onUnauthorized: async () => undefined },
      deviceId: DEVICE_ID,
      pullAs: () => CLINICIAN_ID,
      network: { isOnline: () => true, subscribe: () => () => undefined },
      fetch,
      random: () => 0.5,
      yieldToUi: async () => undefined,
    });
    await applySiteScope({
      db,
      files,
      holdSiteIds: [SITE_ID],
      siteName: () => 'Riverside outreach',
      nowMs: Date.now(),
    });

    const outcome = await engine.syncOnce();
    expect(outcome).toMatchObject({ kind: 'synced', pushed: 1 });
    expect(bodies.join()).toContain('Adwoa');
    expect(await db.outbox.count()).toBe(0);
    // The lost site's patient was not stored again; the other site's new one was.
    expect(await db.records.get([lost[0]!.collection, lost[0]!.id] as unknown as string)).toBe(
      undefined,
    );
    expect(
      (await db.records.get(['patient', id(0x999)] as unknown as string))?.fields.familyName,
    ).toBe('Mensah');
    expect(
      (await db.records.get([kept[0]!.collection, kept[0]!.id] as unknown as string))?.fields,
    ).toEqual(kept[0]!.fields);

    await engine.loadPersistedStatus();
    render(<SyncIndicator engine={engine} />);
    expect(screen.getByRole('status').textContent).toContain(
      'Records of Riverside outreach were removed from this tablet because it no longer serves that site',
    );
  });

  it('reads nothing when no site was lost, and starts a full re-pull when a lost site comes back', async () => {
    const { db, files, records, lost } = await tablet();
    const first = await applySiteScope({
      db,
      files,
      holdSiteIds: [SITE_ID, OTHER_SITE_ID],
      nowMs: PULLED_AT,
    });
    expect(first).toEqual({ removal: null, regained: [] });
    expect((await records.get('letter', lost[4]!.id))?.fields.siteId).toBe(OTHER_SITE_ID);

    await applySiteScope({ db, files, holdSiteIds: [SITE_ID], nowMs: PULLED_AT + 1 });
    const regained: string[][] = [];
    const back = await applySiteScope({
      db,
      files,
      holdSiteIds: [SITE_ID, OTHER_SITE_ID],
      nowMs: PULLED_AT + 2,
      onSiteRegained: async (siteIds) => {
        regained.push(siteIds);
      },
    });
    expect(back.regained).toEqual([OTHER_SITE_ID]);
    expect(regained).toEqual([[OTHER_SITE_ID]]);
    expect((await readSiteScope(db))?.removedSiteIds).toEqual([]);
  });
});
