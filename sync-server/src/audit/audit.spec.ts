import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  bearer,
  createSite,
  createUser,
  signIn,
  type TestSession,
} from '../testing/identity-factory';
import { createTestApp, type TestApp } from '../testing/test-app';
import { AuditService, scopeOfKind, withoutSecrets } from './audit.service';

describe('the audit trail', () => {
  let t: TestApp;
  let siteA: string;
  let siteB: string;
  let supervisorA: TestSession;
  let admin: TestSession;
  const server = () => t.app.getHttpServer();
  const audit = () => t.app.get(AuditService);

  beforeAll(async () => {
    t = await createTestApp();
    siteA = (await createSite(t)).id;
    siteB = (await createSite(t)).id;
    supervisorA = await signIn(t, {
      user: await createUser(t, { role: 'supervisor', siteIds: [siteA] }),
    });
    admin = await signIn(t, { user: await createUser(t, { role: 'admin', siteIds: [] }) });
    await t.em().transactional(async (em) => {
      for (let i = 0; i < 5; i++) {
        await audit().record(em, {
          kind: 'record.changed',
          siteId: siteA,
          subjectType: 'patient',
          subjectId: `a-${i}`,
          detail: { fields: ['familyName'] },
        });
      }
      await audit().record(em, {
        kind: 'record.changed',
        siteId: siteB,
        subjectType: 'patient',
        subjectId: 'b-0',
      });
    });
  });
  afterAll(async () => {
    await t.close();
  });

  it('refuses UPDATE, DELETE and TRUNCATE of its rows, even by the table owner', async () => {
    const connection = t.em().getConnection();
    await expect(connection.execute(`update audit_event set kind = 'tampered'`)).rejects.toThrow(
      /append-only/,
    );
    await expect(connection.execute(`delete from audit_event`)).rejects.toThrow(/append-only/);
    await expect(connection.execute(`truncate audit_event`)).rejects.toThrow(/append-only/);
    const rows = await connection.execute(
      `select count(*)::int as n from audit_event where kind = 'record.changed'`,
    );
    expect(rows[0]?.n).toBe(6);
  });

  it('commits an event with the caller’s transaction and drops it when that transaction rolls back', async () => {
    await expect(
      t.em().transactional(async (em) => {
        await audit().record(em, {
          kind: 'record.changed',
          siteId: siteA,
          subjectType: 'patient',
          subjectId: 'rolled-back',
        });
        throw new Error('the clinical change failed');
      }),
    ).rejects.toThrow('the clinical change failed');
    const rows = await t
      .em()
      .getConnection()
      .execute(`select 1 from audit_event where subject_id = 'rolled-back'`);
    expect(rows).toHaveLength(0);
  });

  it('shows a supervisor the clinical events of their own sites only, page by page', async () => {
    const first = await request(server())
      .get('/api/audit?scope=clinical&limit=3')
      .set(bearer(supervisorA.accessToken));
    expect(first.status).toBe(200);
    expect(first.body.items.map((e: { subjectId: string }) => e.subjectId)).toEqual([
      'a-4',
      'a-3',
      'a-2',
    ]);
    expect(first.body.next).toEqual(expect.any(String));
    const second = await request(server())
      .get(`/api/audit?scope=clinical&limit=3&cursor=${first.body.next}`)
      .set(bearer(supervisorA.accessToken));
    expect(second.body.items.map((e: { subjectId: string }) => e.subjectId)).toEqual([
      'a-1',
      'a-0',
    ]);
    expect(second.body.next).toBeNull();
    expect(second.body.items[0]).toMatchObject({
      scope: 'clinical',
      kind: 'record.changed',
      siteId: siteA,
      detail: { fields: ['familyName'] },
    });
  });

  it('shows admins the account part and none of the clinical part', async () => {
    const account = await request(server())
      .get('/api/audit?scope=account&limit=200')
      .set(bearer(admin.accessToken));
    expect(account.status).toBe(200);
    expect(account.body.items.length).toBeGreaterThan(0);
    expect(account.body.items.every((e: { scope: string }) => e.scope === 'account')).toBe(true);
    expect(account.body.items.map((e: { kind: string }) => e.kind)).toContain('auth.sign_in');
    const clinical = await request(server())
      .get('/api/audit?scope=clinical')
      .set(bearer(admin.accessToken));
    expect(clinical.status).toBe(403);
    const supervisorAccount = await request(server())
      .get('/api/audit?scope=account')
      .set(bearer(supervisorA.accessToken));
    expect(supervisorAccount.status).toBe(403);
  });

  it('names the wrong query field', async () => {
    const res = await request(server())
      .get('/api/audit?scope=everything')
      .set(bearer(admin.accessToken));
    expect(res.status).toBe(400);
    expect(res.body.message).toContain('query.scope');
    const cursor = await request(server())
      .get('/api/audit?scope=account&cursor=abc')
      .set(bearer(admin.accessToken));
    expect(cursor.status).toBe(400);
    expect(cursor.body.message).toContain('query.cursor');
  });

  it('appends several events in one call, in order, with the caller’s transaction', async () => {
    await t.em().transactional(async (em) => {
      await audit().recordMany(em, [
        { kind: 'record.changed', siteId: siteB, subjectType: 'visit', subjectId: 'many-1' },
        {
          kind: 'record.changed',
          siteId: siteB,
          subjectType: 'visit',
          subjectId: 'many-2',
          detail: { token: 'x' },
        },
      ]);
    });
    const rows = await t
      .em()
      .getConnection()
      .execute<{ subject_id: string; detail: unknown }[]>(
        `select subject_id, detail from audit_event where subject_id like 'many-%' order by seq`,
      );
    expect(rows.map((row) => row.subject_id)).toEqual(['many-1', 'many-2']);
    expect(rows[1]?.detail).toEqual({});
  });

  it('stores every event’s own values in a batch, whether a column is shared by all events or differs', async () => {
    const actor = '0190c6a0-0000-7000-8000-00000000aa01';
    await t.em().transactional(async (em) => {
      await audit().recordMany(em, [
        {
          kind: 'record.created',
          actorId: actor,
          siteId: siteB,
          subjectType: 'visit',
          subjectId: 'mix-1',
        },
        {
          kind: 'record.changed',
          actorId: actor,
          siteId: null,
          subjectType: 'visit',
          subjectId: 'mix-2',
        },
        {
          kind: 'record.changed',
          actorId: actor,
          subjectType: 'patient',
          subjectId: 'mix-3',
          detail: { n: 3 },
        },
      ]);
    });
    const rows = await t
      .em()
      .getConnection()
      .execute<Record<string, unknown>[]>(
        `select "kind", "scope", "actor_id", "device_id", "site_id", "subject_type", "subject_id", "detail"
           from audit_event where subject_id like 'mix-%' order by seq`,
      );
    expect(rows).toEqual([
      {
        kind: 'record.created',
        scope: 'clinical',
        actor_id: actor,
        device_id: null,
        site_id: siteB,
        subject_type: 'visit',
        subject_id: 'mix-1',
        detail: {},
      },
      {
        kind: 'record.changed',
        scope: 'clinical',
        actor_id: actor,
        device_id: null,
        site_id: null,
        subject_type: 'visit',
        subject_id: 'mix-2',
        detail: {},
      },
      {
        kind: 'record.changed',
        scope: 'clinical',
        actor_id: actor,
        device_id: null,
        site_id: null,
        subject_type: 'patient',
        subject_id: 'mix-3',
        detail: { n: 3 },
      },
    ]);
  });

  it('keeps quotes, backslashes and question marks of a batch intact, and rolls the batch back with its transaction', async () => {
    const awkward = `O'Brien said "?" \\ then $1 ?? ok`;
    await t.em().transactional(async (em) => {
      await audit().recordMany(em, [
        {
          kind: 'record.changed',
          siteId: siteB,
          subjectType: 'visit',
          subjectId: 'batch-kept',
          detail: { note: awkward },
        },
      ]);
    });
    await expect(
      t.em().transactional(async (em) => {
        await audit().recordMany(em, [
          { kind: 'record.changed', siteId: siteB, subjectType: 'visit', subjectId: 'batch-lost' },
        ]);
        throw new Error('the change failed');
      }),
    ).rejects.toThrow('the change failed');
    const rows = await t
      .em()
      .getConnection()
      .execute<{ subject_id: string; detail: { note?: string }; occurred_at: Date }[]>(
        `select subject_id, detail, occurred_at from audit_event where subject_id like 'batch-%'`,
      );
    expect(rows.map((row) => row.subject_id)).toEqual(['batch-kept']);
    expect(rows[0]?.detail.note).toBe(awkward);
    expect(new Date(rows[0]?.occurred_at ?? 0).toISOString()).toBe(t.clock.now().toISOString());
  });

  it('files kinds under account or clinical by their prefix', () => {
    expect(scopeOfKind('auth.sign_in')).toBe('account');
    expect(scopeOfKind('device.revoked')).toBe('account');
    expect(scopeOfKind('user.role_changed')).toBe('account');
    expect(scopeOfKind('record.changed')).toBe('clinical');
    expect(scopeOfKind('conflict.resolved')).toBe('clinical');
  });

  it('drops credential-like keys from an event’s detail at any depth', () => {
    expect(
      withoutSecrets({
        email: 'a@b.test',
        password: 'x',
        nested: { refreshToken: 'y', deviceSecret: 'z', fields: ['familyName'] },
      }),
    ).toEqual({ email: 'a@b.test', nested: { fields: ['familyName'] } });
  });
});
