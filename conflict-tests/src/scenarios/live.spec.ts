// Live changes with the real engine: tablets holding GET /api/sync/events on one server instance
// receive, without anyone asking for a sync, what another tablet pushed through the other
// instance on the same database (docs/sync-protocol.md, "Live changes").
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { TestUser } from '@server/testing/identity-factory';
import { startClinic, type Clinic } from '../harness/clinic-server';
import { SimTablet } from '../harness/sim-tablet';

// @microsoft/fetch-event-source reads the page's `window` (timers) and `document` (visibility);
// Node has neither, so this file gives it the two it uses.
const page = globalThis as unknown as { window?: unknown; document?: unknown };
page.window ??= globalThis;
page.document ??= { hidden: false, addEventListener() {}, removeEventListener() {} };

let clinic: Clinic;
let writerPerson: TestUser;
let readerPerson: TestUser;
const tablets: SimTablet[] = [];

beforeAll(async () => {
  clinic = await startClinic({ processes: 2 });
  writerPerson = await clinic.person('orthoptist');
  readerPerson = await clinic.person('orthoptist');
});
afterAll(async () => {
  for (const t of tablets) await t.close();
  await clinic?.close();
});

async function waitFor<T>(read: () => Promise<T | undefined>, timeoutMs: number): Promise<T> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const value = await read();
    if (value !== undefined) return value;
    if (Date.now() > until) throw new Error(`not there within ${timeoutMs} ms`);
    await new Promise((resolve) => setTimeout(resolve, 20));
  }
}

describe('live changes between tablets on two server instances', () => {
  it('brings a pushed edit into another tablet’s database with no sync asked for', async () => {
    const writer = await SimTablet.create(clinic, 'live-writer', [writerPerson], {
      baseUrl: clinic.baseUrls[0]!,
    });
    const reader = await SimTablet.create(clinic, 'live-reader', [readerPerson], {
      baseUrl: clinic.baseUrls[1]!,
      live: true,
    });
    tablets.push(writer, reader);
    // The reader starts as the app does: a first sync, then the stream.
    reader.engine.start();
    await waitFor(
      async () => (reader.engine.snapshot().live === 'live' ? true : undefined),
      10_000,
    );

    const id = await writer.create('patient', {
      siteId: clinic.siteId,
      givenName: 'Live',
      familyName: 'Arrival',
      dateOfBirth: '2017-07-07',
      clinicNumber: 'LV-1',
    });
    expect((await writer.sync()).kind).toBe('synced');
    const created = await waitFor(async () => reader.get('patient', id), 10_000);
    expect(created.fields.familyName).toBe('Arrival');

    await writer.update('patient', id, { familyName: 'Changed' });
    expect((await writer.sync()).kind).toBe('synced');
    const version = (await writer.get('patient', id))!.version;
    const changed = await waitFor(async () => {
      const record = await reader.get('patient', id);
      return record && record.version >= version ? record : undefined;
    }, 10_000);
    expect(changed.fields.familyName).toBe('Changed');
    expect(reader.engine.snapshot().live).toBe('live');
  });

  it('closes the stream of a tablet revoked while it listens', async () => {
    const tablet = await SimTablet.create(clinic, 'live-revoked', [readerPerson], {
      baseUrl: clinic.baseUrls[1]!,
      live: true,
    });
    tablets.push(tablet);
    tablet.engine.start();
    await waitFor(
      async () => (tablet.engine.snapshot().live === 'live' ? true : undefined),
      10_000,
    );
    await clinic.revoke(tablet.device.deviceId);
    await waitFor(async () => (tablet.engine.snapshot().live !== 'live' ? true : undefined), 3_000);
    tablet.engine.stop();
  });
});
