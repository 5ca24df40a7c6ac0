// The Disputes table of the Review desk: the open disputes of the supervisor's sites, each with
// the patient, visit and site it belongs to and its candidates named (people, tablets, times),
// filtered, sorted and paged; and one dispute with its record and the visit's related records
// for context. Resolution itself goes through the conflicts module's resolve route; the
// review_addendum trigger makes it an Addendum on a Signed visit.
import { EntityManager } from '@mikro-orm/postgresql';
import { Inject, Injectable, NotFoundException } from '@nestjs/common';
import {
  compareWrites,
  isCollectionName,
  type CollectionName,
  type JsonValue,
} from '@fuselight/shared';
import type { AuthUser } from '../auth/auth-user';
import { assertSiteAccess, sitesOf } from '../auth/scope';
import { CLOCK, type Clock } from '../common/clock.provider';
import type { StoredRecord } from '../records/stored-record';
import {
  NameBook,
  conflictById,
  hlcWallIso,
  isoOf,
  openConflictsInSites,
  patientName,
  recordsByIds,
  sectionsOfVisits,
  sitesByIds,
  visitsAwaitingCountersign,
  type ConflictRow,
} from './review-store';
import type { DisputeQuery } from './review.schemas';
import type { DisputeDetailView, DisputePageView, DisputeRowView } from '@fuselight/shared';

const SIGNED_STATUSES: ReadonlySet<string> = new Set(['signed', 'countersigned']);
const str = (value: JsonValue | undefined): string | null =>
  typeof value === 'string' ? value : null;

@Injectable()
export class DisputeDeskService {
  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(CLOCK) private readonly clock: Clock,
  ) {}

  async summary(user: AuthUser): Promise<{ openDisputes: number; awaitingCountersign: number }> {
    const em = this.em.fork();
    const sites = sitesOf(user);
    const open = await openConflictsInSites(em, sites);
    const waiting = await visitsAwaitingCountersign(em, sites);
    return { openDisputes: open.length, awaitingCountersign: waiting.length };
  }

  async list(user: AuthUser, query: DisputeQuery): Promise<DisputePageView> {
    const em = this.em.fork();
    const conflicts = await openConflictsInSites(em, sitesOf(user));
    const rows = await this.describe(em, conflicts);
    const now = this.clock.now().getTime();
    const patient = query.patient?.trim().toLowerCase();
    const filtered = rows.filter(
      (row) =>
        (!query.siteId || row.siteId === query.siteId) &&
        (!query.section || row.collection === query.section) &&
        (!patient || (row.patientName ?? '').toLowerCase().includes(patient)) &&
        (query.minAgeHours === undefined ||
          now - Date.parse(row.openedAt) >= query.minAgeHours * 3_600_000),
    );
    const direction = query.direction === 'desc' ? -1 : 1;
    const key = (row: DisputeRowView): string => {
      switch (query.sort) {
        case 'patient':
          return (row.patientName ?? '').toLowerCase();
        case 'section':
          return `${row.collection}:${row.field}`;
        case 'site':
          return (row.siteName ?? '').toLowerCase();
        case 'age':
        case undefined:
          return row.openedAt;
      }
    };
    // Oldest first by default: age ascending by opening time means the longest-waiting first.
    filtered.sort(
      (a, b) => direction * (key(a) < key(b) ? -1 : key(a) > key(b) ? 1 : a.id < b.id ? -1 : 1),
    );
    const pageSize = query.pageSize;
    const start = (query.page - 1) * pageSize;
    const siteNames = new Map(
      rows.filter((r) => r.siteId).map((r) => [r.siteId as string, r.siteName ?? '']),
    );
    return {
      items: filtered.slice(start, start + pageSize),
      total: filtered.length,
      page: query.page,
      pageSize,
      openTotal: rows.length,
      facets: {
        sites: [...siteNames]
          .map(([id, name]) => ({ id, name }))
          .sort((a, b) => a.name.localeCompare(b.name)),
        sections: [...new Set(rows.map((r) => r.collection))].sort(),
      },
    };
  }

  async detail(user: AuthUser, id: string): Promise<DisputeDetailView> {
    const em = this.em.fork();
    const conflict = await conflictById(em, id);
    if (!conflict) throw new NotFoundException(`No dispute has the id ${id}.`);
    assertSiteAccess(user, conflict.site_id);
    const [row] = await this.describe(em, [conflict]);
    const records = await recordsByIds(em, [conflict.record_id]);
    const record = records.get(conflict.record_id);
    if (!row || !record)
      throw new NotFoundException(`The record of dispute ${id} is not on the server.`);
    const related =
      row.visitId && record.collection !== 'visit'
        ? (await sectionsOfVisits(em, [row.visitId])).filter(
            (s) => s.collection === record.collection && s.id !== record.id,
          )
        : [];
    const view = (r: StoredRecord) => ({
      collection: r.collection,
      id: r.id,
      version: r.version,
      fields: r.fields,
    });
    return { ...row, record: view(record), related: related.map(view) };
  }

  /** Conflicts with their record's patient, visit and site, and candidates named. */
  private async describe(
    em: EntityManager,
    conflicts: readonly ConflictRow[],
  ): Promise<DisputeRowView[]> {
    if (conflicts.length === 0) return [];
    const records = await recordsByIds(
      em,
      conflicts.map((c) => c.record_id),
    );
    const visitIdOf = (record: StoredRecord | undefined): string | null =>
      !record ? null : record.collection === 'visit' ? record.id : str(record.fields.visitId);
    const patientIdOf = (record: StoredRecord | undefined): string | null =>
      !record ? null : record.collection === 'patient' ? record.id : str(record.fields.patientId);
    const visits = await recordsByIds(
      em,
      [...records.values()].map(visitIdOf).filter((id): id is string => id !== null),
    );
    const patientIds = [...records.values()]
      .map(patientIdOf)
      .filter((id): id is string => id !== null);
    const patients = await recordsByIds(em, patientIds);
    const sites = await sitesByIds(
      em,
      conflicts.map((c) => c.site_id),
    );
    const names = await NameBook.load(
      em,
      conflicts.flatMap((c) => c.candidates.map((k) => k.by)),
      conflicts.flatMap((c) => c.candidates.map((k) => k.device)),
    );
    return conflicts.map((conflict): DisputeRowView => {
      const record = records.get(conflict.record_id);
      const visitId = visitIdOf(record);
      const visit = visitId ? (visitId === record?.id ? record : visits.get(visitId)) : undefined;
      const patientId = patientIdOf(record);
      const patient = patientId ? patients.get(patientId) : undefined;
      const site = sites.get(conflict.site_id);
      const current = record?.fields[conflict.field] ?? null;
      const provisionalStamp = record?.stamps[conflict.field];
      // The provisional candidate is the one the field holds now: its stamp when the stamp is a
      // candidate's, otherwise the greatest write among equal values.
      let provisionalIndex = conflict.candidates.findIndex(
        (k) =>
          provisionalStamp !== undefined &&
          k.hlc === provisionalStamp.hlc &&
          k.device === provisionalStamp.device,
      );
      if (provisionalIndex < 0) {
        conflict.candidates.forEach((k, index) => {
          const best = conflict.candidates[provisionalIndex];
          if (
            JSON.stringify(k.value) === JSON.stringify(current) &&
            (!best || compareWrites(k, best) > 0)
          ) {
            provisionalIndex = index;
          }
        });
      }
      return {
        id: conflict.id,
        collection: (isCollectionName(conflict.collection)
          ? conflict.collection
          : 'visit') as CollectionName,
        recordId: conflict.record_id,
        field: conflict.field,
        status: conflict.status,
        openedAt: isoOf(conflict.opened_at),
        provisional: current,
        candidates: conflict.candidates.map((k, index) => ({
          value: k.value,
          hlc: k.hlc,
          version: Number(k.version),
          by: names.person(k.by),
          device: names.device(k.device),
          enteredAt: hlcWallIso(k.hlc),
          provisional: index === provisionalIndex,
        })),
        siteId: conflict.site_id,
        siteName: site?.name ?? null,
        timeZone: site?.time_zone ?? 'UTC',
        patientId,
        patientName: patientName(patient?.fields),
        visitId,
        visitDate: str(visit?.fields.date),
        signedVisit: SIGNED_STATUSES.has(str(visit?.fields.status) ?? ''),
      };
    });
  }
}
