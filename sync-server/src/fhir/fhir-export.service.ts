// The FHIR export routes' logic (docs/fhir.md): one visit as a Bundle for a clinician or
// supervisor of the visit's site, and the bulk export of every resource changed since a time in a
// supervisor's sites, written as NDJSON page by page (only the ids already written are kept).
import { EntityManager } from '@mikro-orm/postgresql';
import {
  ForbiddenException,
  Inject,
  Injectable,
  NotFoundException,
  UnprocessableEntityException,
} from '@nestjs/common';
import type { Bundle, Resource } from 'fhir/r4';
import { SECTION_COLLECTIONS, type CollectionName, type JsonValue } from '@fuselight/shared';
import { AuditService } from '../audit/audit.service';
import type { AuthUser } from '../auth/auth-user';
import { assertClinicalAccess, hasSiteAccess, sitesOf } from '../auth/scope';
import { CLOCK, type Clock } from '../common/clock.provider';
import { RecordStore } from '../records/record-store';
import type { StoredRecord } from '../records/stored-record';
import { FhirSourceService } from './fhir-source.service';
import { buildVisitBundle, patientOf, visitResources } from './visit-bundle';

/** Records whose change changes a visit's export. */
const EXPORT_COLLECTIONS: readonly CollectionName[] = [
  'patient',
  'visit',
  ...SECTION_COLLECTIONS,
  'addendum',
];

/** Records read per page of the bulk export. */
export const BULK_PAGE_SIZE = 200;

const str = (value: JsonValue | undefined): string | null =>
  typeof value === 'string' ? value : null;

export const isSignedVisit = (visit: StoredRecord): boolean =>
  visit.fields.status === 'signed' || visit.fields.status === 'countersigned';

@Injectable()
export class FhirExportService {
  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(CLOCK) private readonly clock: Clock,
    @Inject(AuditService) private readonly audit: AuditService,
    @Inject(RecordStore) private readonly store: RecordStore,
    @Inject(FhirSourceService) private readonly source: FhirSourceService,
  ) {}

  /**
   * The visit's Bundle (type collection). A draft visit is exported with its findings
   * `preliminary` and its Encounter in progress (docs/fhir.md, "Draft visits").
   */
  async visitBundle(user: AuthUser, visitId: string): Promise<Bundle> {
    assertClinicalAccess(user);
    const source = await this.source.load(visitId);
    // Another site's visit reads the same as an absent one.
    if (!source.found || !hasSiteAccess(user, source.visit.siteId)) {
      throw new NotFoundException(`visit ${visitId} was not found`);
    }
    if (!source.input) {
      throw new UnprocessableEntityException(
        `visit ${visitId}: its patient ${str(source.visit.fields.patientId) ?? ''} is not on the server yet`,
      );
    }
    const bundle = buildVisitBundle(source.input, { type: 'collection' });
    bundle.timestamp = this.clock.now().toISOString();
    await this.em.fork().transactional((em) =>
      this.audit.record(em, {
        kind: 'fhir.visit_exported',
        actorId: user.userId,
        deviceId: user.deviceId,
        siteId: source.visit.siteId,
        subjectType: 'visit',
        subjectId: visitId,
        detail: { resources: bundle.entry?.length ?? 0 },
      }),
    );
    return bundle;
  }

  /** The sites a bulk export covers: the caller's, or the one asked for when it is theirs. */
  bulkSites(user: AuthUser, siteId: string | undefined): string[] {
    assertClinicalAccess(user);
    const mine = sitesOf(user);
    if (siteId === undefined) return mine;
    if (!mine.includes(siteId)) {
      throw new ForbiddenException(
        `site: ${siteId} is not one of the sites this session may use; ask an admin to add you to it.`,
      );
    }
    return [siteId];
  }

  /**
   * NDJSON lines of every resource of signed visits whose records changed at or after `since` in
   * `sites`, each resource once, and of patients whose details changed. Reads a page of changed
   * records at a time, in version order. A change still uncommitted when its page is read is left
   * to the next export: give it a `since` a little before this one started (docs/fhir.md).
   */
  async *bulkLines(
    user: AuthUser,
    sites: readonly string[],
    since: Date,
    pageSize = BULK_PAGE_SIZE,
  ): AsyncGenerator<string> {
    const em = this.em.fork();
    const written = new Set<string>();
    const visitsDone = new Set<string>();
    let after = 0;
    let resources = 0;
    for (;;) {
      const page = await this.store.changedPage(em, {
        collections: EXPORT_COLLECTIONS,
        after,
        bound: null,
        sites,
        since,
        limit: pageSize,
      });
      if (page.length === 0) break;
      after = page[page.length - 1]!.version;
      const lines: string[] = [];
      const emit = (resource: Resource) => {
        const key = `${resource.resourceType}/${resource.id!}`;
        if (written.has(key)) return;
        written.add(key);
        resources += 1;
        lines.push(`${JSON.stringify(resource)}\n`);
      };
      const visitIds = new Set<string>();
      const patients: StoredRecord[] = [];
      for (const record of page) {
        if (record.deleted) continue;
        if (record.collection === 'patient') patients.push(record);
        else if (record.collection === 'visit') visitIds.add(record.id);
        else {
          const visitId = str(record.fields.visitId);
          if (visitId) visitIds.add(visitId);
        }
      }
      for (const visitId of visitIds) {
        if (visitsDone.has(visitId)) continue;
        visitsDone.add(visitId);
        const source = await this.source.load(visitId, em);
        if (!source.found || !source.input || !sites.includes(source.visit.siteId)) continue;
        if (!isSignedVisit(source.visit)) continue;
        for (const resource of visitResources(source.input)) emit(resource);
      }
      for (const patient of patients) {
        emit(patientOf(patient));
      }
      if (lines.length > 0) yield lines.join('');
      if (page.length < pageSize) break;
    }
    await this.em.fork().transactional((tx) =>
      this.audit.record(tx, {
        kind: 'fhir.bulk_exported',
        actorId: user.userId,
        deviceId: user.deviceId,
        siteId: sites.length === 1 ? sites[0]! : null,
        subjectType: 'fhir-export',
        detail: { sites: [...sites], since: since.toISOString(), resources },
      }),
    );
  }
}
