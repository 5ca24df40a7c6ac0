// What the server holds, read through the wire as a tablet would (every page from 0), and the
// supervisor's Disputes API, for the scenarios' assertions.
import {
  conflictListResponseSchema,
  pullResponseSchema,
  type ConflictItem,
  type PulledRecord,
} from '@fuselight/shared';
import type { Clinic } from './clinic-server';

/** One page of a pull, with the cursor it was asked from. */
export interface PulledPage {
  after: number;
  records: PulledRecord[];
  cursor: number;
}

/**
 * Every page of a pull from cursor 0, read through the wire as a tablet reads them (the one pull
 * loop of the harness). A reset starts over from 0, or is an error when `resetIs` says so.
 */
export async function* pullPages(
  clinic: Clinic,
  token: string,
  {
    limit = 1000,
    resetIs = 'start over',
  }: { limit?: number; resetIs?: 'start over' | 'an error' } = {},
): AsyncGenerator<PulledPage> {
  let cursor = 0;
  for (let pages = 0; ; pages += 1) {
    if (pages > 10_000) throw new Error(`a pull with pages of ${limit} does not end`);
    const response = await fetch(`${clinic.baseUrl}/api/sync/pull?after=${cursor}&limit=${limit}`, {
      headers: { Authorization: `Bearer ${token}` },
    });
    if (response.status !== 200)
      throw new Error(`pull answered ${response.status}: ${await response.text()}`);
    const page = pullResponseSchema.parse(await response.json());
    if ('reset' in page) {
      if (resetIs === 'an error') throw new Error('a first sync was told to start over');
      cursor = 0;
      continue;
    }
    yield { after: cursor, records: page.records, cursor: page.cursor };
    cursor = page.cursor;
    if (!page.more) return;
  }
}

export async function pullEverything(clinic: Clinic, token: string): Promise<PulledRecord[]> {
  const records = new Map<string, PulledRecord>();
  for await (const page of pullPages(clinic, token)) {
    for (const record of page.records) records.set(`${record.collection}/${record.id}`, record);
  }
  return [...records.values()];
}

/** The server's records as {collection/id: {version, deleted, fields}}, like SimTablet.snapshot(). */
export async function serverSnapshot(clinic: Clinic, token: string) {
  const records = await pullEverything(clinic, token);
  return Object.fromEntries(
    records
      .sort((a, b) => `${a.collection}/${a.id}`.localeCompare(`${b.collection}/${b.id}`))
      .map((r) => [
        `${r.collection}/${r.id}`,
        {
          version: r.version,
          deleted: r.deleted,
          fields: r.fields,
          conflicts: [...r.conflicts].sort(),
        },
      ]),
  );
}

export async function listConflicts(
  clinic: Clinic,
  token: string,
  query: { status?: 'open' | 'resolved'; recordId?: string } = {},
): Promise<ConflictItem[]> {
  const items: ConflictItem[] = [];
  let next: string | null = null;
  do {
    const params = new URLSearchParams();
    if (query.status) params.set('status', query.status);
    if (query.recordId) params.set('recordId', query.recordId);
    if (next) params.set('cursor', next);
    const response = await fetch(`${clinic.baseUrl}/api/conflicts?${params.toString()}`, {
      headers: { Authorization: `Bearer ${token}` },
    });
    if (response.status !== 200)
      throw new Error(`conflicts answered ${response.status}: ${await response.text()}`);
    const page = conflictListResponseSchema.parse(await response.json());
    items.push(...page.items);
    next = page.next;
  } while (next !== null);
  return items;
}

export async function resolveConflict(
  clinic: Clinic,
  token: string,
  conflictId: string,
  value: unknown,
  note: string,
): Promise<{ status: number; body: unknown }> {
  const response = await fetch(`${clinic.baseUrl}/api/conflicts/${conflictId}/resolve`, {
    method: 'POST',
    headers: { Authorization: `Bearer ${token}`, 'Content-Type': 'application/json' },
    body: JSON.stringify({ value, note }),
  });
  return { status: response.status, body: await response.json().catch(() => null) };
}

export async function deskToken(
  clinic: Clinic,
  person: { email: string; password: string },
): Promise<string> {
  const response = await fetch(`${clinic.baseUrl}/api/auth/login`, {
    method: 'POST',
    headers: { 'Content-Type': 'application/json' },
    body: JSON.stringify({ email: person.email, password: person.password }),
  });
  if (response.status !== 200) throw new Error(`desk sign-in answered ${response.status}`);
  return ((await response.json()) as { accessToken: string }).accessToken;
}
