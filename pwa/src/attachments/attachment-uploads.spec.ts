// Attachment files upload on the sync runtime's schedule, with no screen open: a photo taken and
// left goes up once the tablet is online, after its attachment record has been pushed.
import { afterEach, describe, expect, it } from 'vitest';
import { getDefaultDb, setDefaultDb, FuselightDb } from '../data/db';
import { RecordsRepository, type EditContext } from '../data/records-repository';
import { CLINICIAN_ID, DEVICE_ID, patientFields, visitFields } from '../data/test-fixtures';
import { configureSync, getSyncEngine, stopSync } from '../sync/sync-runtime';
import { getAttachmentDb } from './attachment-db';
import { attachFile } from './attachment-intake';

let now = Date.parse('2026-12-01T10:00:00.000Z');
const ctx = (): EditContext => ({
  authorId: CLINICIAN_ID,
  deviceId: DEVICE_ID,
  nowMs: (now += 1000),
});

afterEach(async () => {
  stopSync();
  const db = getDefaultDb();
  db.close();
  await db.delete();
  setDefaultDb(null);
  const files = getAttachmentDb();
  await files.files.clear();
  await files.transfers.clear();
});

function png(size: number): Uint8Array<ArrayBuffer> {
  const bytes = new Uint8Array(size);
  bytes.set([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
  for (let i = 8; i < size; i += 1) bytes[i] = (i * 7) % 251;
  return bytes;
}

/**
 * A stand-in clinic server: takes every pushed change, answers an empty pull, and takes a file's
 * bytes only once its attachment record has been pushed (409 before, as the server does).
 */
function clinicServer() {
  const pushedIds = new Set<string>();
  const log: string[] = [];
  const stored = new Map<string, number[]>();
  let version = 0;
  const fetchFn = async (input: RequestInfo | URL, init?: RequestInit): Promise<Response> => {
    const url = new URL(String(input), 'http://clinic.test');
    const method = init?.method ?? 'GET';
    log.push(`${method} ${url.pathname}`);
    if (url.pathname === '/api/sync/push') {
      const body = JSON.parse(String(init?.body)) as {
        changes: Array<{ changeId: string; recordId: string }>;
      };
      for (const change of body.changes) pushedIds.add(change.recordId);
      return Response.json({
        results: body.changes.map((change) => ({
          changeId: change.changeId,
          status: 'applied',
          version: (version += 1),
          conflicts: [],
        })),
        serverTime: new Date(now).toISOString(),
      });
    }
    if (url.pathname === '/api/sync/pull') {
      return Response.json({ records: [], cursor: version, more: false });
    }
    if (url.pathname.startsWith('/api/attachments/')) {
      const headers = new Headers(init?.headers);
      const id = headers.get('x-attachment-id') ?? '';
      if (!pushedIds.has(id)) return Response.json({ message: 'not synced' }, { status: 409 });
      const bytes = stored.get(id) ?? [];
      if (method === 'HEAD') {
        return new Response(null, {
          status: 200,
          headers: { 'upload-offset': String(bytes.length), 'upload-complete': '?0' },
        });
      }
      const range = /bytes (\d+)-(\d+)\/(\d+)/.exec(headers.get('content-range') ?? '');
      if (!range || Number(range[1]) !== bytes.length) {
        return Response.json({ offset: bytes.length }, { status: 409 });
      }
      bytes.push(...new Uint8Array(init?.body as Uint8Array));
      stored.set(id, bytes);
      const complete = bytes.length === Number(range[3]);
      return Response.json({ offset: bytes.length, complete }, { status: complete ? 201 : 200 });
    }
    return new Response(null, { status: 404 });
  };
  return { fetchFn, log, stored };
}

function network(initially: boolean) {
  let online = initially;
  const listeners: Array<(online: boolean) => void> = [];
  return {
    monitor: {
      isOnline: () => online,
      subscribe: (listener: (online: boolean) => void) => {
        listeners.push(listener);
        return () => undefined;
      },
    },
    set(value: boolean) {
      online = value;
      for (const listener of listeners) listener(value);
    },
  };
}

const noTimers = { setTimeout: () => null, clearTimeout: () => undefined };

describe('attachment uploads on the sync schedule', () => {
  it('uploads a photo taken and left, with no Visit open, once the tablet is back online', async () => {
    setDefaultDb(new FuselightDb(`uploads-${crypto.randomUUID()}`));
    const records = new RecordsRepository(getDefaultDb());
    const patientId = await records.create('patient', patientFields(), ctx());
    const visitId = await records.create('visit', visitFields(patientId), ctx());
    const visit = (await records.get('visit', visitId))!;
    const bytes = png(3000);
    const files = getAttachmentDb();
    const attachmentId = await attachFile(
      records,
      files,
      { file: new Blob([bytes]), caption: 'Cover test', visit },
      ctx(),
    );

    // The tablet starts offline (a reload with no network): nothing is tried.
    const server = clinicServer();
    const net = network(false);
    configureSync({
      baseUrl: 'http://clinic.test',
      auth: { tokenFor: async () => 'token', onUnauthorized: async () => undefined },
      deviceId: DEVICE_ID,
      pullAs: () => CLINICIAN_ID,
      fetch: server.fetchFn,
      network: net.monitor,
      timers: noTimers,
      clock: { now: () => now },
      yieldToUi: async () => undefined,
    });
    await getSyncEngine()!.syncNow();
    await getSyncEngine()!.afterSyncSettled();
    expect(server.log).toEqual([]);
    expect((await files.transfers.get(attachmentId))!.state).toBe('waiting');

    // The network returns: the schedule syncs, and the file goes up after its record.
    net.set(true);
    await expect
      .poll(async () => (await files.transfers.get(attachmentId))?.state, { timeout: 5000 })
      .toBe('uploaded');
    expect(server.stored.get(attachmentId)).toEqual([...bytes]);
    const firstPush = server.log.indexOf('POST /api/sync/push');
    const firstHead = server.log.findIndex((line) => line.startsWith('HEAD /api/attachments/'));
    expect(firstPush).toBeGreaterThanOrEqual(0);
    expect(firstHead).toBeGreaterThan(firstPush);
  });

  it('keeps a file waiting, and its bytes, while the server cannot take it', async () => {
    setDefaultDb(new FuselightDb(`uploads-${crypto.randomUUID()}`));
    const records = new RecordsRepository(getDefaultDb());
    const patientId = await records.create('patient', patientFields(), ctx());
    const visitId = await records.create('visit', visitFields(patientId), ctx());
    const visit = (await records.get('visit', visitId))!;
    const files = getAttachmentDb();
    const attachmentId = await attachFile(
      records,
      files,
      { file: new Blob([png(1500)]), caption: '', visit },
      ctx(),
    );
    const net = network(true);
    configureSync({
      baseUrl: 'http://clinic.test',
      auth: { tokenFor: async () => 'token', onUnauthorized: async () => undefined },
      deviceId: DEVICE_ID,
      pullAs: () => CLINICIAN_ID,
      fetch: async () => new Response(null, { status: 503 }),
      network: net.monitor,
      timers: noTimers,
      clock: { now: () => now },
      yieldToUi: async () => undefined,
    });
    await getSyncEngine()!.syncNow();
    await getSyncEngine()!.afterSyncSettled();
    const transfer = (await files.transfers.get(attachmentId))!;
    expect(transfer.state).toBe('waiting');
    expect(transfer.lastError).toBe('The clinic server had a problem; try again shortly.');
    expect(await files.files.get(attachmentId)).toBeDefined();
  });
});
