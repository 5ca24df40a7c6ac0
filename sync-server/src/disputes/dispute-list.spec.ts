// The Review desk's Disputes list past 5,000 open disputes: more than that are seeded in bulk by
// SQL (generate_series) in two sites, and the list is walked page by page through its cursor.
// Counts are exact, every dispute is reached exactly once in a stable order, filters apply to
// every page and to the counts, and a supervisor sees only the disputes of their own sites.
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { DisputePageView, DisputeRowView, ReviewSummary } from '@fuselight/shared';
import { sqlRows } from '../database/sql';
import {
  bearer,
  createSite,
  createUser,
  signIn,
  type TestSession,
} from '../testing/identity-factory';
import { createTestApp, type TestApp } from '../testing/test-app';

/** Disputes on section records in site A, and on patient records themselves. */
const SECTION_DISPUTES_A = 4_837;
const PATIENTS_A = 400;
const OPEN_A = SECTION_DISPUTES_A + PATIENTS_A; // 5,237
const OPEN_B = 300;
const RESOLVED_A = 150;

let t: TestApp;
let siteA: string;
let siteB: string;
let supervisorA: TestSession;
let supervisorB: TestSession;
let supervisorBoth: TestSession;

const http = () => request(t.app.getHttpServer());

async function sql<T extends object>(text: string, params: (string | number)[] = []) {
  return sqlRows<T>(t.em(), text, params);
}

/**
 * Patients (names repeat, so sorts meet ties; every 50th has no name), one section record per
 * section dispute pointing at a patient, and the disputes: open ones whose opening times repeat
 * (ties broken by id) and differ by microseconds, plus resolved ones that must not count.
 */
async function seedSite(
  siteId: string,
  prefix: string,
  patients: number,
  sectionDisputes: number,
  resolved: number,
): Promise<void> {
  await sql(
    `insert into "sync_record" ("id", "collection", "site_id", "version", "deleted", "fields", "stamps", "created_at", "updated_at")
     select md5(?::text || '-patient-' || g)::uuid, 'patient', ?::uuid, 1, false,
            case when g % 50 = 0 then jsonb_build_object('siteId', ?::text)
                 else jsonb_build_object('siteId', ?::text,
                        'givenName', (array['Mira', 'ada', 'Oskar', 'Zeynep'])[1 + g % 4],
                        'familyName', 'Tenby' || (g % 20)) end,
            '{}'::jsonb, now(), now()
       from generate_series(1, ?::int) g`,
    [prefix, siteId, siteId, siteId, patients],
  );
  await sql(
    `insert into "sync_record" ("id", "collection", "site_id", "version", "deleted", "fields", "stamps", "created_at", "updated_at")
     select md5(?::text || '-section-' || g)::uuid,
            (array['amblyoscopeAngles', 'coverTest', 'visualAcuity'])[1 + g % 3], ?::uuid, 1, false,
            jsonb_build_object('siteId', ?::text,
              'patientId', md5(?::text || '-patient-' || (1 + g % ?::int))::uuid::text),
            '{}'::jsonb, now(), now()
       from generate_series(1, ?::int) g`,
    [prefix, siteId, siteId, prefix, patients, sectionDisputes + resolved],
  );
  const candidates = `jsonb_build_array(
      jsonb_build_object('value', 1, 'hlc', '001764579600000-00001-a', 'by', gen_random_uuid()::text, 'device', 'server', 'version', 1, 'at', '2026-12-01T09:00:00.000Z'),
      jsonb_build_object('value', 2, 'hlc', '001764579600000-00002-b', 'by', gen_random_uuid()::text, 'device', 'server', 'version', 1, 'at', '2026-12-01T09:00:00.000Z'))`;
  // Opening times from 2026-11-01 on, about five disputes per minute value, some apart by a
  // microsecond (the cursor must keep that precision).
  const openedAt = `timestamptz '2026-11-01T00:00:00Z' + ((g % 997) * interval '1 minute') + ((g % 3) * interval '1 microsecond')`;
  await sql(
    `insert into "sync_conflict" ("id", "collection", "record_id", "site_id", "field", "status", "opened_at", "candidates")
     select gen_random_uuid(), r."collection", r."id", r."site_id", 'objectiveHorizontalDeg', 'open', ${openedAt}, ${candidates}
       from generate_series(1, ?::int) g
       join "sync_record" r on r."id" = md5(?::text || '-section-' || g)::uuid`,
    [sectionDisputes, prefix],
  );
  await sql(
    `insert into "sync_conflict" ("id", "collection", "record_id", "site_id", "field", "status", "opened_at", "candidates")
     select gen_random_uuid(), 'patient', md5(?::text || '-patient-' || g)::uuid, ?::uuid, 'dateOfBirth', 'open', ${openedAt}, ${candidates}
       from generate_series(1, ?::int) g`,
    [prefix, siteId, patients],
  );
  await sql(
    `insert into "sync_conflict" ("id", "collection", "record_id", "site_id", "field", "status", "opened_at", "candidates", "resolved_at", "note")
     select gen_random_uuid(), r."collection", r."id", r."site_id", 'objectiveHorizontalDeg', 'resolved', ${openedAt}, ${candidates}, now(), 'done'
       from generate_series(?::int + 1, ?::int + ?::int) g
       join "sync_record" r on r."id" = md5(?::text || '-section-' || g)::uuid`,
    [sectionDisputes, sectionDisputes, resolved, prefix],
  );
}

function list(session: TestSession, query: Record<string, string | number> = {}) {
  return http().get('/api/review/disputes').query(query).set(bearer(session.accessToken));
}

/** Walks the list from the first page to the last through `next`; returns every row in order. */
async function walk(
  session: TestSession,
  query: Record<string, string | number> = {},
): Promise<{ rows: DisputeRowView[]; pages: DisputePageView[] }> {
  const rows: DisputeRowView[] = [];
  const pages: DisputePageView[] = [];
  let cursor: string | null = null;
  do {
    const res = await list(session, { ...query, ...(cursor ? { cursor } : {}) });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    const page = res.body as DisputePageView;
    pages.push(page);
    rows.push(...page.items);
    cursor = page.next;
  } while (cursor && pages.length < 1_000);
  return { rows, pages };
}

async function openIdsInOrder(siteId: string, extra = ''): Promise<string[]> {
  const rows = await sql<{ id: string }>(
    `select c."id" from "sync_conflict" c where c."status" = 'open' and c."site_id" = ?::uuid ${extra}
      order by c."opened_at", c."id"`,
    [siteId],
  );
  return rows.map((r) => r.id);
}

/** Code-point comparison, the order of the "C" collation the list sorts text keys in. */
const compareText = (a: string, b: string): number => (a < b ? -1 : a > b ? 1 : 0);

beforeAll(async () => {
  t = await createTestApp();
  siteA = (await createSite(t, { name: 'Harbour Street Clinic' })).id;
  siteB = (await createSite(t, { name: 'Hillside Outreach' })).id;
  await seedSite(siteA, 'a', PATIENTS_A, SECTION_DISPUTES_A, RESOLVED_A);
  await seedSite(siteB, 'b', 60, OPEN_B - 60, 20);
  supervisorA = await signIn(t, {
    user: await createUser(t, { role: 'supervisor', siteIds: [siteA] }),
  });
  supervisorB = await signIn(t, {
    user: await createUser(t, { role: 'supervisor', siteIds: [siteB] }),
  });
  supervisorBoth = await signIn(t, {
    user: await createUser(t, { role: 'supervisor', siteIds: [siteA, siteB] }),
  });
}, 120_000);

afterAll(async () => {
  await t?.close();
});

describe('the Disputes list past 5,000 open disputes', () => {
  it('counts every open dispute of the supervisor’s sites in the summary and the list', async () => {
    const [seeded] = await sql<{ n: string }>(
      `select count(*)::text as "n" from "sync_conflict" where "status" = 'open' and "site_id" = ?::uuid`,
      [siteA],
    );
    expect(Number(seeded?.n)).toBe(5_237);
    for (const [session, open] of [
      [supervisorA, OPEN_A],
      [supervisorB, OPEN_B],
      [supervisorBoth, OPEN_A + OPEN_B],
    ] as const) {
      const summary = await http().get('/api/review/summary').set(bearer(session.accessToken));
      expect(summary.status).toBe(200);
      expect((summary.body as ReviewSummary).openDisputes).toBe(open);
      const first = (await list(session)).body as DisputePageView;
      expect(first.total).toBe(open);
      expect(first.openTotal).toBe(open);
    }
  });

  it('reaches every dispute exactly once, oldest first, in a stable order', async () => {
    const { rows, pages } = await walk(supervisorA, { pageSize: 100 });
    const expected = await openIdsInOrder(siteA);
    expect(expected).toHaveLength(OPEN_A);
    expect(rows.map((r) => r.id)).toEqual(expected);
    expect(pages).toHaveLength(Math.ceil(OPEN_A / 100));
    expect(pages.map((p) => p.page)).toEqual(pages.map((_, i) => i + 1));
    expect(pages.every((p) => p.total === OPEN_A && p.pageSize === 100)).toBe(true);
    expect(pages.at(-1)?.items).toHaveLength(OPEN_A % 100);
    expect(pages.at(-1)?.next).toBeNull();
    // Walked again, the same pages.
    const again = await walk(supervisorA, { pageSize: 100 });
    expect(again.rows.map((r) => r.id)).toEqual(expected);
  }, 120_000);

  it('walks newest first, and by patient, section and site, each dispute once and in order', async () => {
    const expected = await openIdsInOrder(siteA);
    const newest = await walk(supervisorA, { pageSize: 100, direction: 'desc' });
    expect(newest.rows.map((r) => r.id)).toEqual([...expected].reverse());

    const keys: Record<string, (row: DisputeRowView) => string> = {
      patient: (row) => (row.patientName ?? '').toLowerCase(),
      section: (row) => `${row.collection}:${row.field}`,
      site: (row) => (row.siteName ?? '').toLowerCase(),
    };
    const walks = [
      ['patient', 'asc'],
      ['section', 'desc'],
      ['site', 'desc'],
    ] as const;
    for (const [sort, direction] of walks) {
      const key = keys[sort]!;
      const { rows } = await walk(supervisorBoth, { pageSize: 100, sort, direction });
      expect(rows).toHaveLength(OPEN_A + OPEN_B);
      expect(new Set(rows.map((r) => r.id)).size).toBe(OPEN_A + OPEN_B);
      const sign = direction === 'asc' ? 1 : -1;
      for (let i = 1; i < rows.length; i += 1) {
        const [a, b] = [rows[i - 1]!, rows[i]!];
        const order = compareText(key(a), key(b)) || compareText(a.id, b.id);
        expect(sign * order, `${sort} ${direction} at ${i}`).toBeLessThan(0);
      }
    }
  }, 120_000);

  it('keeps the keyset exact across pages of seven among ties of name and time', async () => {
    const { rows, pages } = await walk(supervisorA, {
      pageSize: 7,
      section: 'patient',
      sort: 'patient',
    });
    expect(pages[0]?.total).toBe(PATIENTS_A);
    expect(rows).toHaveLength(PATIENTS_A);
    expect(new Set(rows.map((r) => r.id)).size).toBe(PATIENTS_A);
    // Patients without a name sort first, as ''.
    expect(rows.slice(0, PATIENTS_A / 50).every((r) => r.patientName === null)).toBe(true);
    const byAge = await walk(supervisorA, { pageSize: 7, section: 'patient' });
    expect(byAge.rows.map((r) => r.id)).toEqual(
      await openIdsInOrder(siteA, `and c."collection" = 'patient'`),
    );
  }, 120_000);

  it('applies the filters to every page and to the count', async () => {
    // Section: a third of the section disputes are cover tests.
    const [cover] = await sql<{ n: string }>(
      `select count(*)::text as "n" from "sync_conflict" c
        where c."status" = 'open' and c."site_id" = ?::uuid and c."collection" = 'coverTest'`,
      [siteA],
    );
    const covers = await walk(supervisorA, { pageSize: 100, section: 'coverTest' });
    expect(Number(cover?.n)).toBeGreaterThan(1_000);
    expect(covers.pages[0]?.total).toBe(Number(cover?.n));
    expect(covers.pages[0]?.openTotal).toBe(OPEN_A);
    expect(covers.rows).toHaveLength(Number(cover?.n));
    expect(covers.rows.every((r) => r.collection === 'coverTest')).toBe(true);

    // Patient name, any case, within the name: "Tenby7" but not "Tenby17".
    const tenby7 = await walk(supervisorA, { pageSize: 100, patient: ' tenby7 ' });
    expect(tenby7.rows.length).toBeGreaterThan(0);
    expect(tenby7.pages[0]?.total).toBe(tenby7.rows.length);
    expect(tenby7.rows.every((r) => /tenby7$/i.test(r.patientName ?? ''))).toBe(true);
    const all = await walk(supervisorA, { pageSize: 100, sort: 'patient' });
    expect(tenby7.rows.length).toBe(
      all.rows.filter((r) => /tenby7$/i.test(r.patientName ?? '')).length,
    );

    // Age: the test clock stands at 2026-12-01T09:00Z; opening times run from 2026-11-01T00:00Z
    // over 997 minutes, so 726 hours or more is everything opened by 2026-11-01T03:00Z.
    const old = await walk(supervisorA, { pageSize: 100, minAgeHours: 726 });
    const expectedOld = await openIdsInOrder(
      siteA,
      `and c."opened_at" <= timestamptz '2026-11-01T03:00:00Z'`,
    );
    expect(expectedOld.length).toBeGreaterThan(0);
    expect(expectedOld.length).toBeLessThan(OPEN_A);
    expect(old.rows.map((r) => r.id)).toEqual(expectedOld);
    expect(old.pages[0]?.total).toBe(expectedOld.length);

    // Site: only that site's, and none of a site the supervisor does not have.
    const onlyB = await walk(supervisorBoth, { pageSize: 100, siteId: siteB });
    expect(onlyB.pages[0]?.total).toBe(OPEN_B);
    expect(onlyB.rows.every((r) => r.siteId === siteB)).toBe(true);
    const notMine = (await list(supervisorA, { siteId: siteB })).body as DisputePageView;
    expect(notMine).toMatchObject({ items: [], total: 0, next: null, openTotal: OPEN_A });
  }, 120_000);

  it('shows a supervisor of one site only that site’s disputes, and both sites in the filter choices of a supervisor of both', async () => {
    const b = await walk(supervisorB, { pageSize: 100 });
    expect(b.rows).toHaveLength(OPEN_B);
    expect(b.rows.every((r) => r.siteId === siteB && r.siteName === 'Hillside Outreach')).toBe(
      true,
    );
    expect(b.pages[0]?.facets.sites).toEqual([{ id: siteB, name: 'Hillside Outreach' }]);
    const a = await walk(supervisorA, { pageSize: 100 });
    expect(a.rows.some((r) => r.siteId === siteB)).toBe(false);
    const both = (await list(supervisorBoth)).body as DisputePageView;
    expect(both.facets).toEqual({
      sites: [
        { id: siteA, name: 'Harbour Street Clinic' },
        { id: siteB, name: 'Hillside Outreach' },
      ],
      sections: ['amblyoscopeAngles', 'coverTest', 'patient', 'visualAcuity'],
    });
  });

  it('names each row’s patient and site from SQL paging as before', async () => {
    const page = (await list(supervisorA, { section: 'coverTest', pageSize: 1 }))
      .body as DisputePageView;
    const [row] = page.items;
    expect(row).toMatchObject({
      collection: 'coverTest',
      field: 'objectiveHorizontalDeg',
      status: 'open',
      siteName: 'Harbour Street Clinic',
      patientName: expect.stringMatching(/^(Mira|ada|Oskar|Zeynep) Tenby\d+$/),
    });
    expect(row?.candidates.map((c) => c.value)).toEqual([1, 2]);
  });

  it('refuses a cursor it did not give out, one of another list, and a page number, naming the field', async () => {
    const garbage = await list(supervisorA, { cursor: 'garbage' });
    expect(garbage.status).toBe(400);
    expect(garbage.body.message).toContain('query.cursor');
    const first = (await list(supervisorA, { pageSize: 5 })).body as DisputePageView;
    expect(first.next).toEqual(expect.any(String));
    const otherSort = await list(supervisorA, {
      pageSize: 5,
      sort: 'patient',
      cursor: first.next!,
    });
    expect(otherSort.status).toBe(400);
    expect(otherSort.body.message).toContain('query.cursor');
    const otherFilter = await list(supervisorA, {
      pageSize: 5,
      section: 'coverTest',
      cursor: first.next!,
    });
    expect(otherFilter.status).toBe(400);
    // A cursor from a list sorted by time cannot be re-typed into one for another sort.
    const forged = Buffer.from(
      JSON.stringify({
        ...(JSON.parse(Buffer.from(first.next!, 'base64url').toString('utf8')) as object),
        key: 'not a time',
      }),
    ).toString('base64url');
    expect((await list(supervisorA, { pageSize: 5, cursor: forged })).status).toBe(400);
    const paged = await list(supervisorA, { page: 2 });
    expect(paged.status).toBe(400);
    expect(paged.body.message).toContain('page');
    const badSize = await list(supervisorA, { pageSize: 0 });
    expect(badSize.status).toBe(400);
    expect(badSize.body.message).toContain('query.pageSize');
  });
});
