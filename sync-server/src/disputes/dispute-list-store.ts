// The Disputes list of the Review desk in SQL: the open disputes of the supervisor's sites,
// filtered in the WHERE clause, sorted in the ORDER BY (qualified names and expressions only),
// paged by keyset (the last row's sort key and id, carried in an opaque cursor) and counted with
// count(*) under the same filters, so every count is exact however many disputes are open.
import type { EntityManager } from '@mikro-orm/postgresql';
import { BadRequestException } from '@nestjs/common';
import { DISPUTE_SORTS, type DisputeQuery, type DisputeSort } from '@fuselight/shared';
import { z } from 'zod';
import { jsonParam, sqlRows, type SqlBinding } from '../database/sql';

const UUID_PATTERN = '^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$';

/** The dispute's patient record: the record itself, or the record its `patientId` names. */
const PATIENT_JOIN = `left join "sync_record" pr on pr."id" = case
    when dr."collection" = 'patient' then dr."id"
    when dr."fields" ->> 'patientId' ~* '${UUID_PATTERN}' then (dr."fields" ->> 'patientId')::uuid
  end`;
const RECORD_JOIN = `left join "sync_record" dr on dr."id" = c."record_id"`;
const SITE_JOIN = `left join "site" ds on ds."id" = c."site_id"`;

/** "mira tenby" (given and family name as the desk shows them, lower case), '' when unknown. */
const PATIENT_NAME_KEY = `lower(concat_ws(' ',
    case when jsonb_typeof(pr."fields" -> 'givenName') = 'string' then nullif(pr."fields" ->> 'givenName', '') end,
    case when jsonb_typeof(pr."fields" -> 'familyName') = 'string' then nullif(pr."fields" ->> 'familyName', '') end))`;

interface SortSpec {
  /** The ORDER BY expression (its tie-break is the dispute's id in the same direction). */
  order: string;
  /** The same key as text, for the cursor. */
  keyText: string;
  /** The cursor's key cast back to the order expression's type. */
  keyParam: string;
  joins: string[];
}

// Text keys compare in the "C" collation (code point order), whatever the database's locale,
// so the order is the same on every server and the keyset comparison agrees with the ORDER BY.
const SORTS: Record<DisputeSort, SortSpec> = {
  age: {
    order: `c."opened_at"`,
    keyText: `to_char(c."opened_at" at time zone 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US"Z"')`,
    keyParam: `?::timestamptz`,
    joins: [],
  },
  patient: {
    order: `(${PATIENT_NAME_KEY} collate "C")`,
    keyText: PATIENT_NAME_KEY,
    keyParam: `(?::text collate "C")`,
    joins: [RECORD_JOIN, PATIENT_JOIN],
  },
  section: {
    order: `((c."collection" || ':' || c."field") collate "C")`,
    keyText: `c."collection" || ':' || c."field"`,
    keyParam: `(?::text collate "C")`,
    joins: [],
  },
  site: {
    order: `(lower(coalesce(ds."name", '')) collate "C")`,
    keyText: `lower(coalesce(ds."name", ''))`,
    keyParam: `(?::text collate "C")`,
    joins: [SITE_JOIN],
  },
};

/** What a cursor carries: where the last page ended, for which list, and the next page's number. */
const cursorSchema = z.object({
  v: z.literal(1),
  sort: z.enum(DISPUTE_SORTS),
  direction: z.enum(['asc', 'desc']),
  filters: z.string(),
  key: z.string(),
  id: z.uuid(),
  page: z.number().int().min(2),
});
type DisputeCursor = z.infer<typeof cursorSchema>;
/** The age sort's key as SORTS.age.keyText renders it. */
const AGE_KEY = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}\.\d{6}Z$/;

function filtersOf(query: DisputeQuery): string {
  return JSON.stringify([
    query.siteId ?? null,
    query.section ?? null,
    query.patient?.trim().toLowerCase() || null,
    query.minAgeHours ?? null,
  ]);
}

function encodeCursor(cursor: DisputeCursor): string {
  return Buffer.from(JSON.stringify(cursor)).toString('base64url');
}

function decodeCursor(text: string, query: DisputeQuery): DisputeCursor {
  let parsed: unknown = null;
  try {
    parsed = JSON.parse(Buffer.from(text, 'base64url').toString('utf8'));
  } catch {
    // Refused below.
  }
  const result = cursorSchema.safeParse(parsed);
  if (!result.success) {
    throw new BadRequestException(
      'query.cursor: not a cursor this server gave out; start again without it.',
    );
  }
  const cursor = result.data;
  if (cursor.sort === 'age' && !AGE_KEY.test(cursor.key)) {
    throw new BadRequestException(
      'query.cursor: not a cursor this server gave out; start again without it.',
    );
  }
  if (
    cursor.sort !== query.sort ||
    cursor.direction !== query.direction ||
    cursor.filters !== filtersOf(query)
  ) {
    throw new BadRequestException(
      'query.cursor: it belongs to a list with other filters or another sort; start again without it.',
    );
  }
  return cursor;
}

export interface DisputeScope {
  /** The supervisor's sites. */
  siteIds: readonly string[];
  /** Disputes opened at or before this time only (the minimum age), or null. */
  openedBy: Date | null;
}

/** The WHERE clause of the list and its count, with its parameters and the joins it needs. */
function whereOf(
  query: DisputeQuery,
  scope: DisputeScope,
): { sql: string; params: SqlBinding[]; joins: string[] } {
  const clauses = [
    `c."status" = 'open'`,
    `c."site_id" in (select jsonb_array_elements_text(?::jsonb)::uuid)`,
  ];
  const params: SqlBinding[] = [jsonParam(scope.siteIds)];
  const joins: string[] = [];
  if (query.siteId) {
    clauses.push(`c."site_id" = ?::uuid`);
    params.push(query.siteId);
  }
  if (query.section) {
    clauses.push(`c."collection" = ?`);
    params.push(query.section);
  }
  const patient = query.patient?.trim();
  if (patient) {
    clauses.push(`strpos(${PATIENT_NAME_KEY}, lower(?::text)) > 0`);
    params.push(patient);
    joins.push(RECORD_JOIN, PATIENT_JOIN);
  }
  if (scope.openedBy) {
    clauses.push(`c."opened_at" <= ?::timestamptz`);
    params.push(scope.openedBy.toISOString());
  }
  return { sql: clauses.join(' and '), params, joins };
}

function joinsSql(...lists: string[][]): string {
  return [...new Set(lists.flat())].join('\n');
}

export interface DisputeIdPage {
  /** The ids of this page's disputes, in order. */
  ids: string[];
  page: number;
  next: string | null;
  /** Disputes matching the filters. */
  total: number;
}

/** One page of the filtered, sorted list (ids only) and the count of everything matching. */
export async function pageOfOpenDisputes(
  em: EntityManager,
  query: DisputeQuery,
  scope: DisputeScope,
): Promise<DisputeIdPage> {
  if (scope.siteIds.length === 0) return { ids: [], page: 1, next: null, total: 0 };
  const cursor = query.cursor ? decodeCursor(query.cursor, query) : null;
  const sort = SORTS[query.sort];
  const where = whereOf(query, scope);
  const desc = query.direction === 'desc';
  const keyset = cursor
    ? `and (${sort.order}, c."id") ${desc ? '<' : '>'} (${sort.keyParam}, ?::uuid)`
    : '';
  const dir = desc ? 'desc' : 'asc';
  const rows = await sqlRows<{ id: string; sort_key: string }>(
    em,
    `select c."id", ${sort.keyText} as "sort_key"
       from "sync_conflict" c
       ${joinsSql(where.joins, sort.joins)}
      where ${where.sql} ${keyset}
      order by ${sort.order} ${dir}, c."id" ${dir}
      limit ?`,
    [...where.params, ...(cursor ? [cursor.key, cursor.id] : []), query.pageSize + 1],
  );
  const [counted] = await sqlRows<{ n: string }>(
    em,
    `select count(*)::text as "n" from "sync_conflict" c ${joinsSql(where.joins)} where ${where.sql}`,
    where.params,
  );
  const page = cursor?.page ?? 1;
  const items = rows.slice(0, query.pageSize);
  const last = items.at(-1);
  return {
    ids: items.map((row) => row.id),
    page,
    next:
      rows.length > query.pageSize && last
        ? encodeCursor({
            v: 1,
            sort: query.sort,
            direction: query.direction,
            filters: filtersOf(query),
            key: last.sort_key,
            id: last.id,
            page: page + 1,
          })
        : null,
    total: Number(counted?.n ?? 0),
  };
}

export interface OpenDisputeTally {
  /** Open disputes in the sites. */
  total: number;
  /** The sites and collections that have open disputes (the list's filter choices). */
  siteIds: string[];
  collections: string[];
}

/** Counts the open disputes of the sites, and which sites and sections they are in. */
export async function tallyOpenDisputes(
  em: EntityManager,
  siteIds: readonly string[],
): Promise<OpenDisputeTally> {
  if (siteIds.length === 0) return { total: 0, siteIds: [], collections: [] };
  const rows = await sqlRows<{ site_id: string; collection: string; n: string }>(
    em,
    `select c."site_id", c."collection", count(*)::text as "n"
       from "sync_conflict" c
      where c."status" = 'open' and c."site_id" in (select jsonb_array_elements_text(?::jsonb)::uuid)
      group by c."site_id", c."collection"`,
    [jsonParam(siteIds)],
  );
  return {
    total: rows.reduce((sum, row) => sum + Number(row.n), 0),
    siteIds: [...new Set(rows.map((row) => row.site_id))],
    collections: [...new Set(rows.map((row) => row.collection))].sort(),
  };
}

/** The number of open disputes in the sites. */
export async function countOpenDisputes(
  em: EntityManager,
  siteIds: readonly string[],
): Promise<number> {
  if (siteIds.length === 0) return 0;
  const [row] = await sqlRows<{ n: string }>(
    em,
    `select count(*)::text as "n" from "sync_conflict" c
      where c."status" = 'open' and c."site_id" in (select jsonb_array_elements_text(?::jsonb)::uuid)`,
    [jsonParam(siteIds)],
  );
  return Number(row?.n ?? 0);
}
