// The Disputes table of the Review desk: the open disputes of the supervisor's sites, each with
// the patient, visit and site it belongs to and its candidates named (people, tablets, times),
// filtered, sorted, paged and counted in SQL (dispute-list-store.ts); one dispute with its
// record and the visit's related records for context; and the desk tab's counts. Resolution goes
// through POST /api/conflicts/:id/resolve (DisputeResolutionService).
import { IsolationLevel } from '@mikro-orm/core';
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
import { NameBook, hlcWallIso, isoOf, patientName, sitesByIds } from '../common/desk-names';
import { RecordStore } from '../records/record-store';
import type { StoredRecord } from '../records/stored-record';
import { VisitRecords } from '../records/visit-records';
import { DisputeStore, type StoredDisputeRow } from './dispute-store';
import type {
  DisputeDetailView,
  DisputePageView,
  DisputeQuery,
  DisputeRowView,
  ReviewSummary,
} from '@fuselight/shared';

const SIGNED_STATUSES: ReadonlySet<string> = new Set(['signed', 'countersigned']);
const str = (value: JsonValue | undefined): string | null =>
  typeof value === 'string' ? value : null;

@Injectable()
export class DisputeDeskService {
  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(CLOCK) private readonly clock: Clock,
    @Inject(DisputeStore) private readonly disputes: DisputeStore,
    @Inject(RecordStore) private readonly records: RecordStore,
    @Inject(VisitRecords) private readonly visits: VisitRecords,
  ) {}

  async summary(user: AuthUser): Promise<ReviewSummary> {
    const em = this.em.fork();
    const sites = sitesOf(user);
    return {
      openDisputes: await this.disputes.countOpen(em, sites),
      awaitingCountersign: await this.visits.countAwaitingCountersign(em, sites),
    };
  }

  async list(user: AuthUser, query: DisputeQuery): Promise<DisputePageView> {
    const sites = sitesOf(user);
    const openedBy =
      query.minAgeHours === undefined
        ? null
        : new Date(this.clock.now().getTime() - query.minAgeHours * 3_600_000);
    // One snapshot for the page and its counts, so they agree while disputes open and close.
    return this.em.fork().transactional(
      async (em) => {
        const page = await this.disputes.pageOfOpen(em, query, { siteIds: sites, openedBy });
        const found = new Map(
          (await this.disputes.byIds(em, page.ids)).map((row) => [row.id, row]),
        );
        const items = await this.describe(
          em,
          page.ids
            .map((id) => found.get(id))
            .filter((row): row is StoredDisputeRow => row !== undefined),
        );
        const open = await this.disputes.tallyOpen(em, sites);
        const siteNames = await sitesByIds(em, open.siteIds);
        return {
          items,
          total: page.total,
          page: page.page,
          pageSize: query.pageSize,
          next: page.next,
          openTotal: open.total,
          facets: {
            sites: open.siteIds
              .map((id) => ({ id, name: siteNames.get(id)?.name ?? '' }))
              .sort((a, b) => a.name.localeCompare(b.name)),
            sections: open.collections,
          },
        };
      },
      { isolationLevel: IsolationLevel.REPEATABLE_READ, readOnly: true },
    );
  }

  async detail(user: AuthUser, id: string): Promise<DisputeDetailView> {
    const em = this.em.fork();
    const dispute = await this.disputes.byId(em, id);
    if (!dispute) throw new NotFoundException(`No dispute has the id ${id}.`);
    assertSiteAccess(user, dispute.site_id);
    const [row] = await this.describe(em, [dispute]);
    const records = await this.records.byIds(em, [dispute.record_id]);
    const record = records.get(dispute.record_id);
    if (!row || !record)
      throw new NotFoundException(`The record of dispute ${id} is not on the server.`);
    const related =
      row.visitId && record.collection !== 'visit'
        ? (await this.visits.sectionsOf(em, [row.visitId])).filter(
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

  /** Disputes with their record's patient, visit and site, and candidates named. */
  private async describe(
    em: EntityManager,
    disputes: readonly StoredDisputeRow[],
  ): Promise<DisputeRowView[]> {
    if (disputes.length === 0) return [];
    const records = await this.records.byIds(
      em,
      disputes.map((c) => c.record_id),
    );
    const visitIdOf = (record: StoredRecord | undefined): string | null =>
      !record ? null : record.collection === 'visit' ? record.id : str(record.fields.visitId);
    const patientIdOf = (record: StoredRecord | undefined): string | null =>
      !record ? null : record.collection === 'patient' ? record.id : str(record.fields.patientId);
    const visits = await this.records.byIds(
      em,
      [...records.values()].map(visitIdOf).filter((id): id is string => id !== null),
    );
    const patientIds = [...records.values()]
      .map(patientIdOf)
      .filter((id): id is string => id !== null);
    const patients = await this.records.byIds(em, patientIds);
    const sites = await sitesByIds(
      em,
      disputes.map((c) => c.site_id),
    );
    const names = await NameBook.load(
      em,
      disputes.flatMap((c) => c.candidates.map((k) => k.by)),
      disputes.flatMap((c) => c.candidates.map((k) => k.device)),
    );
    return disputes.map((dispute): DisputeRowView => {
      const record = records.get(dispute.record_id);
      const visitId = visitIdOf(record);
      const visit = visitId ? (visitId === record?.id ? record : visits.get(visitId)) : undefined;
      const patientId = patientIdOf(record);
      const patient = patientId ? patients.get(patientId) : undefined;
      const site = sites.get(dispute.site_id);
      const current = record?.fields[dispute.field] ?? null;
      const provisionalStamp = record?.stamps[dispute.field];
      // The provisional candidate is the one the field holds now: its stamp when the stamp is a
      // candidate's, otherwise the greatest write among equal values.
      let provisionalIndex = dispute.candidates.findIndex(
        (k) =>
          provisionalStamp !== undefined &&
          k.hlc === provisionalStamp.hlc &&
          k.device === provisionalStamp.device,
      );
      if (provisionalIndex < 0) {
        dispute.candidates.forEach((k, index) => {
          const best = dispute.candidates[provisionalIndex];
          if (
            JSON.stringify(k.value) === JSON.stringify(current) &&
            (!best || compareWrites(k, best) > 0)
          ) {
            provisionalIndex = index;
          }
        });
      }
      return {
        id: dispute.id,
        collection: (isCollectionName(dispute.collection)
          ? dispute.collection
          : 'visit') as CollectionName,
        recordId: dispute.record_id,
        field: dispute.field,
        status: dispute.status,
        openedAt: isoOf(dispute.opened_at),
        provisional: current,
        candidates: dispute.candidates.map((k, index) => ({
          value: k.value,
          hlc: k.hlc,
          version: Number(k.version),
          by: names.person(k.by),
          device: names.device(k.device),
          enteredAt: hlcWallIso(k.hlc),
          provisional: index === provisionalIndex,
        })),
        siteId: dispute.site_id,
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
