// GET /api/sync/events with two server processes on one PostgreSQL: two app instances, each with
// its own listening connection, sharing the database and the clock; tablets push through one and
// hold their stream on the other (docs/sync-protocol.md, "Live changes").
import { Writable } from 'node:stream';
import { JwtService } from '@nestjs/jwt';
import request from 'supertest';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { inject } from 'vitest';
import type { AuthUser } from '../auth/auth-user';
import { revokeDevice } from '../testing/identity-factory';
import { createTestApp, type TestApp } from '../testing/test-app';
import {
  SITE_A,
  SITE_B,
  Tablet,
  createSyncTestApp,
  newId,
  patientFields,
  signInAs,
  tabletFor,
} from '../sync/testing/sync-test-kit';
import { LiveHub } from './live-hub';
import { changedTo, openEventStream, versionOf, type OpenedStream } from './testing/event-stream';

let first: TestApp;
let second: TestApp;
let firstUrl: string;
let secondUrl: string;
const opened: OpenedStream[] = [];

async function urlOf(t: TestApp): Promise<string> {
  await t.app.listen(0, '127.0.0.1');
  const address = t.app.getHttpServer().address() as { port: number };
  return `http://127.0.0.1:${address.port}`;
}

async function stream(
  baseUrl: string,
  token: string | null,
  headers: Record<string, string> = {},
  path?: string,
) {
  const s = await openEventStream(
    baseUrl,
    { ...(token ? { Authorization: `Bearer ${token}` } : {}), ...headers },
    path,
  );
  opened.push(s);
  return s;
}

/** The tablet pushes a new patient (through its own app instance) and returns its version. */
async function createPatient(tablet: Tablet, siteId: string): Promise<number> {
  const [result] = (
    await tablet.pushOk([tablet.change({ recordId: newId(), fields: patientFields(siteId) })])
  ).results;
  if (result?.status !== 'applied') throw new Error(`push answered ${JSON.stringify(result)}`);
  return result.version;
}

/** The same tablet, sending its requests to the other server process. */
function through(t: TestApp, tablet: Tablet): Tablet {
  return new Tablet(t, tablet.caller);
}

beforeAll(async () => {
  first = await createSyncTestApp({ env: { LIVE_KEEPALIVE_MS: '300' } });
  second = await createTestApp({
    db: first.db,
    clock: first.clock,
    env: { LIVE_KEEPALIVE_MS: '300' },
  });
  firstUrl = await urlOf(first);
  secondUrl = await urlOf(second);
});

afterAll(async () => {
  for (const s of opened) s.close();
  await second?.close();
  await first?.close();
});

describe('live changes across two server processes', () => {
  it('opens an event stream that hears a push made through the other process', async () => {
    const writer = await tabletFor(first, 'orthoptist', [SITE_A]);
    const reader = await tabletFor(first, 'orthoptist', [SITE_A]);
    const s = await stream(secondUrl, reader.caller.token);
    expect(s.status).toBe(200);
    expect(s.contentType).toMatch(/^text\/event-stream/);
    await s.next((e) => e.event === 'retry', 2000);
    const from = s.events.length;
    const version = await createPatient(writer, SITE_A);
    const event = await s.next(changedTo(version), 2000, from);
    expect(event.id).toBe(String(version));
    // A keep-alive comment follows on its own (every 300 ms in this test; 20 s by default).
    await s.next((e) => e.event === 'comment' && e.data === ': keep-alive', 2000);
  });

  it('tells a stream only of its own sites, with its own sites’ highest version', async () => {
    const writerA = await tabletFor(first, 'orthoptist', [SITE_A]);
    const writerB = await tabletFor(first, 'orthoptist', [SITE_B]);
    const readerA = await tabletFor(first, 'orthoptist', [SITE_A]);
    const readerB = await tabletFor(first, 'outreach', [SITE_B]);
    const versionB = await createPatient(writerB, SITE_B);
    const streamA = await stream(secondUrl, readerA.caller.token);
    const streamB = await stream(firstUrl, readerB.caller.token);
    await streamB.next(changedTo(versionB), 2000);
    const fromB = streamB.events.length;
    const fromA = streamA.events.length;

    const versionA = await createPatient(writerA, SITE_A);
    await streamA.next(changedTo(versionA), 2000, fromA);
    // Site B's stream is told nothing of site A's commit, then hears its own site's next one,
    // with site B's version (below site A's), not the server-wide highest.
    const laterB = await createPatient(through(second, writerB), SITE_B);
    const next = await streamB.next((e) => e.event === 'changed', 2000, fromB);
    expect(versionOf(next)).toBe(laterB);
    expect(
      streamB.events
        .slice(fromB)
        .filter((e) => e.event === 'changed')
        .map(versionOf),
    ).toEqual([laterB]);
    expect(laterB).toBeGreaterThan(versionA);
  });

  it('answers a stream coming back with Last-Event-ID only when there is something newer', async () => {
    const writer = await tabletFor(first, 'orthoptist', [SITE_A]);
    const version = await createPatient(writer, SITE_A);
    const current = await stream(secondUrl, writer.caller.token);
    const latest = versionOf(await current.next(changedTo(), 2000));
    expect(latest).toBeGreaterThanOrEqual(version);

    const behind = await stream(secondUrl, writer.caller.token, { 'Last-Event-ID': '1' });
    expect(versionOf(await behind.next(changedTo(), 2000))).toBe(latest);

    const upToDate = await stream(firstUrl, writer.caller.token, {
      'Last-Event-ID': String(latest),
    });
    await upToDate.next((e) => e.event === 'comment', 2000);
    expect(upToDate.events.filter((e) => e.event === 'changed')).toEqual([]);
  });

  it('sends supervisors a review event when a dispute opens, and other roles none', async () => {
    const one = await tabletFor(first, 'orthoptist', [SITE_A]);
    const two = await tabletFor(first, 'orthoptist', [SITE_A]);
    const supervisor = await tabletFor(first, 'supervisor', [SITE_A, SITE_B]);
    const desk = await stream(secondUrl, supervisor.caller.token);
    const orthoptist = await stream(secondUrl, two.caller.token);
    await desk.next(changedTo(), 2000);
    await orthoptist.next(changedTo(), 2000);

    const recordId = newId();
    const created = (await one.pushOk([one.change({ recordId, fields: patientFields(SITE_A) })]))
      .results[0];
    const base = created?.status === 'applied' ? created.version : 0;
    await one.pushOk([
      one.change({ recordId, baseVersion: base, fields: { dateOfBirth: '2016-04-19' } }),
    ]);
    const fromDesk = desk.events.length;
    first.clock.advance(1000);
    const [answer] = (
      await through(second, two).pushOk([
        two.change({ recordId, baseVersion: base, fields: { dateOfBirth: '2016-04-29' } }),
      ])
    ).results;
    expect(answer).toMatchObject({ status: 'conflict', conflicts: ['dateOfBirth'] });
    await desk.next((e) => e.event === 'review', 2000, fromDesk);
    await orthoptist.next(changedTo(answer?.status === 'conflict' ? answer.version : 0), 2000);
    expect(orthoptist.events.filter((e) => e.event === 'review')).toEqual([]);
  });

  it('gives a supervisor at a desk (no tablet) a stream of review events only', async () => {
    const desk = await signInAs(first, 'supervisor', [SITE_A], { desk: true });
    const s = await stream(secondUrl, desk.token, {}, '/api/review/events');
    expect(s.status).toBe(200);
    await s.next((e) => e.event === 'retry', 2000);
    const one = await tabletFor(first, 'orthoptist', [SITE_A]);
    const two = await tabletFor(first, 'orthoptist', [SITE_A]);
    const recordId = newId();
    const created = (await one.pushOk([one.change({ recordId, fields: patientFields(SITE_A) })]))
      .results[0];
    const base = created?.status === 'applied' ? created.version : 0;
    await one.pushOk([
      one.change({ recordId, baseVersion: base, fields: { dateOfBirth: '2016-05-19' } }),
    ]);
    first.clock.advance(1000);
    await through(second, two).pushOk([
      two.change({ recordId, baseVersion: base, fields: { dateOfBirth: '2016-05-29' } }),
    ]);
    await s.next((e) => e.event === 'review', 2000);
    expect(s.events.filter((e) => e.event === 'changed')).toEqual([]);

    const orthoptist = await stream(firstUrl, one.caller.token, {}, '/api/review/events');
    expect(orthoptist.status).toBe(403);
  });

  it('closes the stream of a tablet revoked through the other process within a second', async () => {
    const tablet = await tabletFor(first, 'orthoptist', [SITE_A]);
    const s = await stream(secondUrl, tablet.caller.token);
    await s.next(changedTo(), 2000);
    const revoking = Date.now();
    await revokeDevice(first, tablet.caller.deviceId ?? '');
    const revoked = Date.now();
    const endedAt = await s.ended(1000 + (revoked - revoking));
    expect(endedAt - revoked).toBeLessThan(1000);
    const closing = s.events.find((e) => e.event === 'closed');
    expect(closing && JSON.parse(closing.data)).toEqual({ reason: 'session-ended' });
    // And it cannot come back.
    const again = await stream(secondUrl, tablet.caller.token);
    expect(again.status).toBe(401);
  });

  it('closes the stream of a session that signed out', async () => {
    const tablet = await tabletFor(first, 'orthoptist', [SITE_A]);
    const s = await stream(firstUrl, tablet.caller.token);
    await s.next(changedTo(), 2000);
    const res = await request(second.app.getHttpServer())
      .post('/api/auth/logout')
      .set('authorization', `Bearer ${tablet.caller.token}`)
      .send({});
    expect(res.status).toBeLessThan(300);
    await s.ended(1500);
    expect(s.events.find((e) => e.event === 'closed')?.data).toBe('{"reason":"session-ended"}');
  });

  it('keeps a stream through a lost listening connection, and tells it what it missed', async () => {
    const writer = await tabletFor(first, 'orthoptist', [SITE_A]);
    const reader = await tabletFor(first, 'orthoptist', [SITE_A]);
    const s = await stream(secondUrl, reader.caller.token);
    await s.next(changedTo(), 2000);
    const hub = second.app.get(LiveHub);
    const pid = hub.listenerPid;
    expect(pid).not.toBeNull();

    // What a PostgreSQL restart does to the listening connection: its backend ends.
    const admin = new pg.Client({ connectionString: inject('adminDatabaseUrl') });
    await admin.connect();
    try {
      await admin.query('select pg_terminate_backend($1)', [pid]);
      // A change committed while the listener is away: its notice is lost to this process.
      const missed = await createPatient(writer, SITE_A);
      const from = 0;
      await s.next(changedTo(missed), 5000, from);
      expect(hub.listenerPid).not.toBeNull();
      expect(hub.listenerPid).not.toBe(pid);
      // And notices reach it again afterwards.
      const fromNow = s.events.length;
      const later = await createPatient(writer, SITE_A);
      await s.next(changedTo(later), 2000, fromNow);
    } finally {
      await admin.end();
    }
    expect(s.events.some((e) => e.event === 'closed')).toBe(false);
  });
});

describe('refusals that cost the server nothing', () => {
  it('answers 401 without a token and for a token signed by another server', async () => {
    const streamsBefore = second.app.get(LiveHub).snapshot().streams;
    const none = await stream(secondUrl, null);
    expect(none.status).toBe(401);
    const tablet = await tabletFor(first, 'orthoptist', [SITE_A]);
    const foreign = new JwtService({ secret: 'another-clinic-server-secret-of-32-chars!' }).sign(
      { sub: tablet.caller.userId, role: 'orthoptist', siteIds: [SITE_A] },
      { expiresIn: 300 },
    );
    const refused = await stream(secondUrl, foreign);
    expect(refused.status).toBe(401);
    expect((refused.body as { message: string }).message).toMatch(/sign in again/);
    expect(second.app.get(LiveHub).snapshot().streams).toBe(streamsBefore);
  });

  it('answers 403 for a desk session (no tablet)', async () => {
    const desk = await signInAs(first, 'supervisor', [SITE_A], { desk: true });
    const s = await stream(firstUrl, desk.token);
    expect(s.status).toBe(403);
    expect(JSON.stringify(s.body)).toMatch(/enrolled tablet/);
  });

  it('answers 400 naming Last-Event-ID when it is not a version', async () => {
    const tablet = await tabletFor(first, 'orthoptist', [SITE_A]);
    for (const bad of ['abc', '-1', '12.5', '99999999999999999999']) {
      const s = await stream(secondUrl, tablet.caller.token, { 'Last-Event-ID': bad });
      expect(s.status).toBe(400);
      expect((s.body as { message: string }).message).toMatch(
        /^Last-Event-ID: ".*" is not a version number/,
      );
    }
  });

  it('drops a stream whose reader does not keep up instead of buffering for it', async () => {
    const hub = second.app.get(LiveHub);
    const tablet = await tabletFor(first, 'orthoptist', [SITE_A]);
    // A reader that never takes anything: its buffer fills at the first write.
    let destroyed = false;
    const stuck = new Writable({
      highWaterMark: 8,
      write: () => undefined,
      destroy: (_error, callback) => {
        destroyed = true;
        callback(null);
      },
    });
    const user: AuthUser = {
      userId: tablet.caller.userId,
      role: 'orthoptist',
      siteIds: [SITE_A],
      deviceId: tablet.caller.deviceId,
      sessionId: sessionIdOf(tablet.caller.token),
    };
    const before = hub.snapshot().dropped;
    const forget = await hub.open(
      {
        write: (chunk) => stuck.write(chunk),
        get writableNeedDrain() {
          return stuck.writableNeedDrain;
        },
        end: () => stuck.end(),
        destroy: () => stuck.destroy(),
      },
      user,
      { lastEventId: null, expiresAt: null },
    );
    // Keep-alives come every 300 ms here; the second write finds the first still waiting.
    await waitFor(() => destroyed, 3000);
    expect(hub.snapshot().dropped).toBe(before + 1);
    expect(stuck.writableLength).toBeLessThan(200);
    forget();
  });
});

function sessionIdOf(token: string): string {
  const payload = JSON.parse(Buffer.from(token.split('.')[1] ?? '', 'base64url').toString()) as {
    sessionId: string;
  };
  return payload.sessionId;
}

async function waitFor(check: () => boolean, timeoutMs: number): Promise<void> {
  const until = Date.now() + timeoutMs;
  while (!check()) {
    if (Date.now() > until) throw new Error(`not so within ${timeoutMs} ms`);
    await new Promise((resolve) => setTimeout(resolve, 20));
  }
}
