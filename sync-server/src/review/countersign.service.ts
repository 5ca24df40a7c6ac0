// Countersigning: the queue of visits signed by clinicians who need a supervisor's
// countersignature, and the two answers a supervisor gives — countersign, or return the visit
// to its author with a comment. Both are server changes to the visit record (so they reach the
// author's tablet on its next pull) stamped by the supervisor, with an audit event in the same
// transaction.
import { EntityManager } from '@mikro-orm/postgresql';
import {
  ConflictException,
  ForbiddenException,
  Inject,
  Injectable,
  NotFoundException,
} from '@nestjs/common';
import type { JsonValue } from '@fuselight/shared';
import { AuditService } from '../audit/audit.service';
import type { AuthUser } from '../auth/auth-user';
import { assertSiteAccess, sitesOf } from '../auth/scope';
import { CLOCK, type Clock } from '../common/clock.provider';
import { NameBook, patientName, sitesByIds } from '../common/desk-names';
import { DisputeStore } from '../disputes/dispute-store';
import { RecordStore } from '../records/record-store';
import { ServerWriter } from '../records/server-writer';
import type { StoredRecord } from '../records/stored-record';
import { VisitRecords } from '../records/visit-records';
import type { CountersignItemView, VisitReviewResult } from '@fuselight/shared';
import { applyServerChange } from '../records/server-change';

const str = (value: JsonValue | undefined): string | null =>
  typeof value === 'string' ? value : null;

@Injectable()
export class CountersignService {
  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(CLOCK) private readonly clock: Clock,
    @Inject(AuditService) private readonly audit: AuditService,
    @Inject(ServerWriter) private readonly writer: ServerWriter,
    @Inject(RecordStore) private readonly records: RecordStore,
    @Inject(VisitRecords) private readonly visits: VisitRecords,
    @Inject(DisputeStore) private readonly disputes: DisputeStore,
  ) {}

  async queue(user: AuthUser): Promise<{ items: CountersignItemView[] }> {
    const em = this.em.fork();
    const visits = await this.visits.awaitingCountersign(em, sitesOf(user));
    if (visits.length === 0) return { items: [] };
    const visitIds = visits.map((v) => v.id);
    const sections = await this.visits.sectionsOf(em, visitIds);
    const patients = await this.records.byIds(
      em,
      visits.map((v) => str(v.fields.patientId)).filter((id): id is string => id !== null),
    );
    const sites = await sitesByIds(
      em,
      visits.map((v) => v.siteId),
    );
    const disputes = await this.disputes.openCountsByRecord(em, [
      ...visitIds,
      ...sections.map((s) => s.id),
    ]);
    const people = visits.flatMap((v) => [str(v.fields.clinicianId), str(v.fields.signedBy)]);
    const names = await NameBook.load(
      em,
      people.filter((id): id is string => id !== null),
      [],
    );
    const items = visits.map((visit): CountersignItemView => {
      const own = sections.filter((s) => s.fields.visitId === visit.id);
      const patientId = str(visit.fields.patientId) ?? '';
      const patient = patients.get(patientId);
      const site = sites.get(visit.siteId);
      const signedBy = str(visit.fields.signedBy);
      return {
        visitId: visit.id,
        version: visit.version,
        siteId: visit.siteId,
        siteName: site?.name ?? null,
        timeZone: site?.time_zone ?? 'UTC',
        date: str(visit.fields.date) ?? '',
        reason: str(visit.fields.reason),
        patient: {
          id: patientId,
          name: patientName(patient?.fields),
          dateOfBirth: str(patient?.fields.dateOfBirth),
        },
        clinician: names.person(str(visit.fields.clinicianId) ?? ''),
        signedBy: signedBy ? names.person(signedBy) : null,
        signedAt: str(visit.fields.signedAt),
        returnedComment: str(visit.fields.returnedComment),
        openDisputes: [visit, ...own].reduce((n, r) => n + (disputes.get(r.id) ?? 0), 0),
        sections: own.map((s) => ({
          collection: s.collection,
          id: s.id,
          version: s.version,
          fields: s.fields,
        })),
      };
    });
    return { items };
  }

  countersign(user: AuthUser, visitId: string): Promise<VisitReviewResult> {
    return this.em.fork().transactional(async (em) => {
      const now = this.clock.now();
      await this.assertVisitInScope(em, user, visitId);
      // Open disputes anywhere in the visit must be resolved before its content is vouched for.
      const sections = await this.visits.sectionsOf(em, [visitId]);
      const counts = await this.disputes.openCountsByRecord(em, [
        visitId,
        ...sections.map((s) => s.id),
      ]);
      const open = [...counts.values()].reduce((a, b) => a + b, 0);
      if (open > 0) {
        throw new ConflictException(
          `This visit has ${open} open dispute${open === 1 ? '' : 's'}; resolve ${open === 1 ? 'it' : 'them'} on the Review desk before countersigning.`,
        );
      }
      const written = await applyServerChange(this.writer, em, {
        recordId: visitId,
        fields: {
          status: 'countersigned',
          countersignedBy: user.userId,
          countersignedAt: now.toISOString(),
        },
        by: user.userId,
        deviceId: user.deviceId,
        now,
        check: (visit) => this.assertSigned(visit, user, 'countersigned'),
      });
      await this.audit.record(em, {
        kind: 'review.countersigned',
        actorId: user.userId,
        deviceId: user.deviceId,
        siteId: written.siteId,
        subjectType: 'visit',
        subjectId: visitId,
        detail: { version: written.version, signedBy: written.fields.signedBy ?? null },
      });
      return {
        visitId,
        version: written.version,
        status: 'countersigned' as const,
        fields: written.fields,
      };
    });
  }

  returnToAuthor(user: AuthUser, visitId: string, comment: string): Promise<VisitReviewResult> {
    return this.em.fork().transactional(async (em) => {
      const now = this.clock.now();
      await this.assertVisitInScope(em, user, visitId);
      // Back to draft so the author can correct it and sign again; the earlier signature stays in
      // the record's history (review_field_value), and the comment travels with the record.
      const written = await applyServerChange(this.writer, em, {
        recordId: visitId,
        fields: { status: 'draft', returnedComment: comment },
        by: user.userId,
        deviceId: user.deviceId,
        now,
        check: (visit) => this.assertSigned(visit, user, 'returned'),
      });
      await this.audit.record(em, {
        kind: 'review.returned',
        actorId: user.userId,
        deviceId: user.deviceId,
        siteId: written.siteId,
        subjectType: 'visit',
        subjectId: visitId,
        detail: { version: written.version, comment, signedBy: written.fields.signedBy ?? null },
      });
      return {
        visitId,
        version: written.version,
        status: 'draft' as const,
        fields: written.fields,
      };
    });
  }

  private async assertVisitInScope(
    em: EntityManager,
    user: AuthUser,
    visitId: string,
  ): Promise<void> {
    const visit = await this.records.byId(em, visitId);
    if (!visit || visit.collection !== 'visit' || visit.deleted) {
      throw new NotFoundException(`No visit has the id ${visitId}.`);
    }
    assertSiteAccess(user, visit.siteId);
  }

  private assertSigned(
    visit: StoredRecord,
    user: AuthUser,
    action: 'countersigned' | 'returned',
  ): void {
    const status = str(visit.fields.status);
    if (status !== 'signed') {
      throw new ConflictException(
        `Only a Signed visit can be ${action}; this visit is ${status === 'countersigned' ? 'already Countersigned' : `${status ?? 'without a status'}`}.`,
      );
    }
    const author = str(visit.fields.signedBy) ?? str(visit.fields.clinicianId);
    if (author === user.userId) {
      throw new ForbiddenException(`A visit cannot be ${action} by the person who signed it.`);
    }
  }
}
