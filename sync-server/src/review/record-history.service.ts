// A record's history for the Review desk: every value each field has held (review_field_value),
// with author, tablet and time; the disputes opened and resolved on it; the signatures,
// countersignatures and returns of a visit; and the Addenda (for a visit, also those on its
// sections). The same entries are exported as CSV.
import { EntityManager } from '@mikro-orm/postgresql';
import { Inject, Injectable, NotFoundException } from '@nestjs/common';
import { fieldMeta, isCollectionName, type FieldMeta, type JsonValue } from '@fuselight/shared';
import type { AuthUser } from '../auth/auth-user';
import { assertSiteAccess } from '../auth/scope';
import { NameBook, isoOf, sitesByIds } from '../common/desk-names';
import { AddendumStore, type AddendumRow } from '../disputes/addendum-store';
import { DisputeStore } from '../disputes/dispute-store';
import { FieldHistory } from '../records/field-history';
import { RecordStore } from '../records/record-store';
import type { HistoryEntryView, RecordHistoryView } from '@fuselight/shared';

@Injectable()
export class RecordHistoryService {
  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(RecordStore) private readonly records: RecordStore,
    @Inject(FieldHistory) private readonly fieldHistory: FieldHistory,
    @Inject(DisputeStore) private readonly disputes: DisputeStore,
    @Inject(AddendumStore) private readonly addenda: AddendumStore,
  ) {}

  async history(user: AuthUser, collection: string, recordId: string): Promise<RecordHistoryView> {
    const em = this.em.fork();
    const record = await this.records.byId(em, recordId);
    if (!record || record.collection !== collection) {
      throw new NotFoundException(`No ${collection} record has the id ${recordId}.`);
    }
    assertSiteAccess(user, record.siteId);
    const values = await this.fieldHistory.valuesOf(em, recordId);
    const disputes = await this.disputes.ofRecord(em, recordId);
    const addenda: AddendumRow[] =
      record.collection === 'visit'
        ? await this.addenda.of(em, { visitId: recordId })
        : await this.addenda.of(em, { recordId });
    const site = (await sitesByIds(em, [record.siteId])).get(record.siteId);
    const names = await NameBook.load(
      em,
      [
        ...values.map((v) => v.by_user),
        ...disputes.map((c) => c.resolved_by ?? ''),
        ...addenda.map((a) => a.by_user ?? ''),
      ],
      [...values.map((v) => v.device), ...disputes.map((c) => c.resolved_device ?? '')],
    );

    const entries: HistoryEntryView[] = [];
    const base = { previousValue: undefined, note: null, conflictId: null } as const;
    let lastStatus: JsonValue | null = null;
    for (const v of values) {
      const entry: HistoryEntryView = {
        ...base,
        kind: 'value',
        at: isoOf(v.at),
        field: v.field,
        value: v.value,
        by: names.person(v.by_user),
        device: names.device(v.device),
        hlc: v.hlc,
        version: Number(v.version),
      };
      entries.push(entry);
      if (record.collection === 'visit' && v.field === 'status') {
        const returned =
          v.value === 'draft' && (lastStatus === 'signed' || lastStatus === 'countersigned');
        const kind =
          v.value === 'signed'
            ? 'signed'
            : v.value === 'countersigned'
              ? 'countersigned'
              : returned
                ? 'returned'
                : null;
        if (kind) {
          const comment = values.find(
            (c) => c.field === 'returnedComment' && c.version === v.version,
          );
          entries.push({
            ...entry,
            kind,
            note: kind === 'returned' && typeof comment?.value === 'string' ? comment.value : null,
          });
        }
        lastStatus = v.value;
      }
    }
    for (const c of disputes) {
      entries.push({
        ...base,
        kind: 'dispute-opened',
        at: isoOf(c.opened_at),
        field: c.field,
        by: null,
        device: null,
        hlc: null,
        version: null,
        note: `${c.candidates.length} values entered on different tablets`,
        conflictId: c.id,
      });
      if (c.status === 'resolved') {
        entries.push({
          ...base,
          kind: 'dispute-resolved',
          at: isoOf(c.resolved_at ?? c.opened_at),
          field: c.field,
          value: c.resolved_value,
          by: c.resolved_by ? names.person(c.resolved_by) : null,
          device: c.resolved_device ? names.device(c.resolved_device) : null,
          hlc: null,
          version: c.resolution_version === null ? null : Number(c.resolution_version),
          note: c.note,
          conflictId: c.id,
        });
      }
    }
    for (const a of addenda) {
      entries.push({
        kind: 'addendum',
        at: isoOf(a.at),
        field: a.record_id === recordId ? a.field : `${a.collection}.${a.field}`,
        value: a.value,
        previousValue: a.signed_value ?? a.previous_value,
        by: a.by_user ? names.person(a.by_user) : null,
        device: a.device ? names.device(a.device) : null,
        hlc: null,
        version: a.version === null ? null : Number(a.version),
        note: a.note,
        conflictId: a.conflict_id,
      });
    }
    const order: Record<HistoryEntryView['kind'], number> = {
      value: 0,
      signed: 1,
      countersigned: 1,
      returned: 1,
      'dispute-opened': 2,
      'dispute-resolved': 3,
      addendum: 4,
    };
    entries.sort(
      (a, b) =>
        a.at.localeCompare(b.at) ||
        (a.version ?? 0) - (b.version ?? 0) ||
        order[a.kind] - order[b.kind] ||
        (a.field ?? '').localeCompare(b.field ?? ''),
    );
    return {
      collection: record.collection,
      recordId,
      siteId: record.siteId,
      timeZone: site?.time_zone ?? 'UTC',
      current: {
        collection: record.collection,
        id: record.id,
        version: record.version,
        fields: record.fields,
        deleted: record.deleted,
      },
      entries,
    };
  }

  async csv(user: AuthUser, collection: string, recordId: string): Promise<string> {
    return historyCsv(await this.history(user, collection, recordId));
  }
}

const CSV_HEADER = [
  'time (UTC)',
  'time (clinic)',
  'kind',
  'collection',
  'record id',
  'field',
  'field label',
  'value',
  'previous value',
  'by',
  'by id',
  'tablet',
  'tablet id',
  'version',
  'hlc',
  'note',
  'dispute id',
];

function labelOf(collection: string, field: string | null): string {
  if (!field) return '';
  const [owner, name] = field.includes('.')
    ? (field.split('.', 2) as [string, string])
    : [collection, field];
  if (name === 'deleted') return 'Deleted';
  if (!isCollectionName(owner)) return name;
  return (fieldMeta[owner] as Record<string, FieldMeta>)[name]?.label ?? name;
}

function valueText(value: JsonValue | undefined): string {
  if (value === undefined) return '';
  if (value === null) return 'not recorded';
  if (typeof value === 'string') return value;
  return JSON.stringify(value);
}

function localTime(iso: string, timeZone: string): string {
  try {
    return new Intl.DateTimeFormat('sv-SE', {
      timeZone,
      year: 'numeric',
      month: '2-digit',
      day: '2-digit',
      hour: '2-digit',
      minute: '2-digit',
      second: '2-digit',
    }).format(new Date(iso));
  } catch {
    return iso;
  }
}

/** One CSV cell: quoted when needed, and text that a spreadsheet would run as a formula defused. */
export function csvCell(text: string): string {
  const safe = /^[=+@\t\r]/.test(text) || /^-[^\d.]/.test(text) ? `'${text}` : text;
  return /[",\r\n]/.test(safe) ? `"${safe.replace(/"/g, '""')}"` : safe;
}

export function historyCsv(history: RecordHistoryView): string {
  const lines = [CSV_HEADER.map(csvCell).join(',')];
  for (const e of history.entries) {
    lines.push(
      [
        e.at,
        localTime(e.at, history.timeZone),
        e.kind,
        history.collection,
        history.recordId,
        e.field ?? '',
        labelOf(history.collection, e.field),
        valueText(e.value),
        valueText(e.previousValue),
        e.by?.name ?? '',
        e.by?.id ?? '',
        e.device?.label ?? '',
        e.device?.id ?? '',
        e.version === null ? '' : String(e.version),
        e.hlc ?? '',
        e.note ?? '',
        e.conflictId ?? '',
      ]
        .map(csvCell)
        .join(','),
    );
  }
  return `${lines.join('\r\n')}\r\n`;
}
