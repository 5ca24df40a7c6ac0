import request from 'supertest';
import { v7 as uuidv7 } from 'uuid';
import type { EntityManager } from '@mikro-orm/core';
import type { EntityManager as SqlEntityManager } from '@mikro-orm/postgresql';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  bearer,
  createSite,
  createUser,
  signIn,
  type TestSession,
} from '../testing/identity-factory';
import { sqlRows } from '../database/sql';
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

  /** Writes audit events from a JSON source through `insertSelectSql`, as the push does. */
  async function insertFrom(
    em: EntityManager,
    rows: { id: string; kind: string; site: string | null; subject: string; note?: string }[],
    actorId: string | null = null,
  ) {
    const insert = audit().insertSelectSql<'id' | 'kind' | 'site' | 'subject' | 'note'>({
      scope: 'clinical',
      actorId,
      deviceId: null,
      rows: 'x',
      id: { column: 'id' },
      kind: { column: 'kind' },
      siteId: { column: 'site' },
      subjectType: { constant: 'visit' },
      subjectId: { column: 'subject' },
      detail: { note: { column: 'note' }, kindAgain: { column: 'kind' } },
    });
    await sqlRows(
      em as SqlEntityManager,
      `with "x" as (
         select * from jsonb_to_recordset(?::jsonb) as x("id" uuid, "kind" text, "site" uuid, "subject" text, "note" text)
       ), "audited" as (${insert.sql})
       select 1`,
      [JSON.stringify(rows), ...insert.bindings],
    );
  }

  it('writes the events of a caller’s statement with each row’s own values, the actor and the time', async () => {
    const actor = '0190c6a0-0000-7000-8000-00000000aa01';
    await t.em().transactional(async (em) => {
      await insertFrom(
        em,
        [
          { id: uuidv7(), kind: 'record.created', site: siteB, subject: 'mix-1', note: 'first' },
          { id: uuidv7(), kind: 'record.changed', site: null, subject: 'mix-2' },
        ],
        actor,
      );
    });
    const rows = await t
      .em()
      .getConnection()
      .execute<Record<string, unknown>[]>(
        `select "kind", "scope", "actor_id", "device_id", "site_id", "subject_type", "subject_id", "detail",
                (extract(epoch from "occurred_at") * 1000)::float8 as "occurred_ms"
           from audit_event where subject_id like 'mix-%' order by seq`,
      );
    const at = t.clock.now().getTime();
    expect(rows).toEqual([
      {
        kind: 'record.created',
        scope: 'clinical',
        actor_id: actor,
        device_id: null,
        site_id: siteB,
        subject_type: 'visit',
        subject_id: 'mix-1',
        detail: { note: 'first', kindAgain: 'record.created' },
        occurred_ms: at,
      },
      {
        kind: 'record.changed',
        scope: 'clinical',
        actor_id: actor,
        device_id: null,
        site_id: null,
        subject_type: 'visit',
        subject_id: 'mix-2',
        detail: { note: null, kindAgain: 'record.changed' },
        occurred_ms: at,
      },
    ]);
  });

  it('keeps quotes, backslashes and question marks intact, and rolls the events back with their transaction', async () => {
    const awkward = `O'Brien said "?" \\ then $1 ?? ok`;
    await t.em().transactional(async (em) => {
      await insertFrom(em, [
        { id: uuidv7(), kind: 'record.changed', site: siteB, subject: 'batch-kept', note: awkward },
      ]);
    });
    await expect(
      t.em().transactional(async (em) => {
        await insertFrom(em, [
          { id: uuidv7(), kind: 'record.changed', site: siteB, subject: 'batch-lost' },
        ]);
        throw new Error('the change failed');
      }),
    ).rejects.toThrow('the change failed');
    const rows = await t
      .em()
      .getConnection()
      .execute<{ subject_id: string; detail: { note?: string } }[]>(
        `select subject_id, detail from audit_event where subject_id like 'batch-%'`,
      );
    expect(rows.map((row) => row.subject_id)).toEqual(['batch-kept']);
    expect(rows[0]?.detail.note).toBe(awkward);
  });

  it('refuses a detail key that looks like a credential', () => {
    expect(() =>
      audit().insertSelectSql({
        scope: 'clinical',
        actorId: null,
        deviceId: null,
        rows: 'x',
        id: { column: 'id' },
        kind: { constant: 'record.changed' },
        siteId: { constant: null },
        subjectType: { constant: 'visit' },
        subjectId: { constant: null },
        detail: { accessToken: { column: 't' } },
      }),
    ).toThrow('audit detail key accessToken looks like a credential');
  });

  it('refuses a column or row source that is not a plain name, so no SQL text gets in', () => {
    const input = {
      scope: 'clinical' as const,
      actorId: null,
      deviceId: null,
      rows: 'x',
      id: { column: 'id' },
      kind: { constant: "it's kept as text" },
      siteId: { constant: null },
      subjectType: { constant: 'visit' },
      subjectId: { constant: null },
      detail: {},
    };
    expect(() =>
      audit().insertSelectSql({ ...input, id: { column: 'id"; drop table x; --' } }),
    ).toThrow('audit column: id"; drop table x; -- is not a plain SQL name');
    expect(() => audit().insertSelectSql({ ...input, rows: 'x where true' })).toThrow(
      'audit rows: x where true is not a plain SQL name',
    );
    expect(audit().insertSelectSql(input).sql).toContain(`'it''s kept as text'`);
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
