// The hand-off of signed visits to the hospital record (docs/fhir.md). When FHIR_BASE_URL is set,
// `scan` reads visits and Addenda changed since its cursor (in version order, below the safe
// bound, so no change that commits late is skipped) and queues one outbox row per occasion: the
// signature, the countersignature and each Addendum. `sendDue` sends each due row's Bundle as a
// `transaction` and retries with back-off like the mail outbox; a 4xx answer is a refusal and
// stays refused. Each outcome is written to the visit record (hospitalRecordState, …At, …Note)
// as a server change, so the tablet shows it in words after its next pull.
import { EntityManager } from '@mikro-orm/postgresql';
import { Inject, Injectable, Logger } from '@nestjs/common';
import type { JsonValue, RecordFields } from '@fuselight/shared';
import { AuditService } from '../audit/audit.service';
import { CLOCK, IDS, type Clock, type IdGenerator } from '../common/clock.provider';
import { APP_CONFIG, type AppConfig } from '../config/app-config';
import { RecordStore } from '../records/record-store';
import { ServerWriter } from '../records/server-writer';
import type { StoredRecord } from '../records/stored-record';
import { isSignedVisit } from './fhir-export.service';
import {
  claimDueHandoffs,
  enqueueHandoff,
  handoffsOfVisit,
  lockHandoffCursor,
  markHandoffFailed,
  markHandoffSent,
  moveHandoffCursor,
  type FhirOutboxRow,
} from './fhir-outbox.repository';
import { FhirSourceService } from './fhir-source.service';
import { FHIR_TRANSPORT, type FhirTransport } from './fhir-transport';
import { buildVisitBundle } from './visit-bundle';

/** Attempts before a hand-off is given up (then refused, with the last reason). */
export const MAX_HANDOFF_ATTEMPTS = 8;
const FIRST_RETRY_MS = 30_000;
const LONGEST_RETRY_MS = 60 * 60_000;
const LEASE_MS = 2 * 60_000;
const SCAN_PAGE = 200;

/** 30 s, 1 min, 2 min, … capped at an hour (as the mail outbox). */
export function handoffRetryDelayMs(attemptsSoFar: number): number {
  return Math.min(LONGEST_RETRY_MS, FIRST_RETRY_MS * 2 ** Math.max(0, attemptsSoFar - 1));
}

export interface HandoffRunSummary {
  queued: number;
  sent: number;
  retried: number;
  refused: number;
}

const str = (value: JsonValue | undefined): string | null =>
  typeof value === 'string' && value !== '' ? value : null;

/** The occasions a visit or Addendum record asks to send, each sent once. */
export function occasionsOf(record: StoredRecord, visit: StoredRecord | null): string[] {
  if (record.deleted || !visit || visit.deleted || !isSignedVisit(visit)) return [];
  if (record.collection === 'addendum') return [`addendum:${record.id}`];
  const f = visit.fields as Partial<RecordFields<'visit'>>;
  const occasions: string[] = [];
  if (f.signedAt) occasions.push(`signed:${f.signedAt}`);
  if (f.status === 'countersigned' && f.countersignedAt) {
    occasions.push(`countersigned:${f.countersignedAt}`);
  }
  return occasions;
}

@Injectable()
export class FhirHandoffService {
  private readonly logger = new Logger('FhirHandoff');

  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(CLOCK) private readonly clock: Clock,
    @Inject(IDS) private readonly ids: IdGenerator,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
    @Inject(AuditService) private readonly audit: AuditService,
    @Inject(RecordStore) private readonly store: RecordStore,
    @Inject(ServerWriter) private readonly writer: ServerWriter,
    @Inject(FhirSourceService) private readonly source: FhirSourceService,
    @Inject(FHIR_TRANSPORT) private readonly transport: FhirTransport,
  ) {}

  get enabled(): boolean {
    return this.config.fhirBaseUrl !== null;
  }

  /** One pass of the worker: new occasions into the outbox, then the due rows sent. */
  async runOnce(): Promise<HandoffRunSummary> {
    const summary: HandoffRunSummary = { queued: 0, sent: 0, retried: 0, refused: 0 };
    if (!this.enabled) return summary;
    await this.scan(summary);
    await this.sendDue(summary);
    return summary;
  }

  async scan(summary: HandoffRunSummary): Promise<void> {
    for (;;) {
      const result = await this.em.fork().transactional(async (em) => {
        const after = await lockHandoffCursor(em);
        const bound = await this.store.safeVersionBound(em);
        const page = await this.store.changedPage(em, {
          collections: ['visit', 'addendum'],
          after,
          bound,
          sites: null,
          since: null,
          limit: SCAN_PAGE,
        });
        const visitIds = [
          ...new Set(
            page.map((r) => (r.collection === 'visit' ? r.id : (str(r.fields.visitId) ?? ''))),
          ),
        ];
        const visits = await this.store.byIds(em, visitIds);
        const queuedVisits = new Set<string>();
        for (const record of page) {
          const visit =
            visits.get(
              record.collection === 'visit' ? record.id : (str(record.fields.visitId) ?? ''),
            ) ?? null;
          for (const occasion of occasionsOf(record, visit)) {
            const queued = await enqueueHandoff(
              em,
              { id: this.ids.uuid(), visitId: visit!.id, siteId: visit!.siteId, occasion },
              this.clock.now(),
            );
            if (queued) {
              summary.queued += 1;
              queuedVisits.add(visit!.id);
            }
          }
        }
        if (page.length > 0) await moveHandoffCursor(em, page[page.length - 1]!.version);
        return { more: page.length === SCAN_PAGE, queuedVisits };
      });
      for (const visitId of result.queuedVisits) await this.writeState(visitId);
      if (!result.more) return;
    }
  }

  async sendDue(summary: HandoffRunSummary): Promise<void> {
    const now = this.clock.now();
    const rows = await claimDueHandoffs(
      this.em.fork(),
      now,
      new Date(now.getTime() + LEASE_MS),
      10,
    );
    const visits = new Set<string>();
    for (const row of rows) {
      await this.sendOne(row, summary);
      visits.add(row.visit_id);
    }
    for (const visitId of visits) await this.writeState(visitId);
  }

  private async sendOne(row: FhirOutboxRow, summary: HandoffRunSummary): Promise<void> {
    const em = this.em.fork();
    const source = await this.source.load(row.visit_id);
    const attempts = row.attempts + 1;
    let refusal: string | null = null;
    if (!source.found) refusal = 'the visit no longer exists; nothing was sent';
    else if (!isSignedVisit(source.visit))
      refusal = 'the visit went back to draft before it was sent; it is sent again when signed';
    else if (!source.input) refusal = "the visit's patient is not on the server; nothing was sent";
    if (refusal || !source.found || !source.input) {
      await markHandoffFailed(em, row.id, refusal ?? 'nothing to send', { refused: true });
      summary.refused += 1;
      return;
    }
    const bundle = buildVisitBundle(source.input, { type: 'transaction' });
    bundle.timestamp = this.clock.now().toISOString();
    const result = await this.transport.send(this.config.fhirBaseUrl!, bundle);
    if (result.ok) {
      await markHandoffSent(em, row.id, result.location, this.clock.now());
      summary.sent += 1;
      return;
    }
    if (!result.retry || attempts >= MAX_HANDOFF_ATTEMPTS) {
      await markHandoffFailed(em, row.id, result.reason, { refused: true });
      summary.refused += 1;
    } else {
      await markHandoffFailed(em, row.id, result.reason, {
        retryAt: new Date(this.clock.now().getTime() + handoffRetryDelayMs(attempts)),
      });
      summary.retried += 1;
    }
    this.logger.warn(`hand-off ${row.id} of visit ${row.visit_id}: ${result.reason}`);
  }

  /** The state of the visit's newest occasion, written to the visit record when it changed. */
  async writeState(visitId: string): Promise<void> {
    const [latest] = await handoffsOfVisit(this.em.fork(), visitId);
    if (!latest) return;
    const fields: Record<string, JsonValue> =
      latest.status === 'sent'
        ? {
            hospitalRecordState: 'sent',
            hospitalRecordAt: new Date(latest.sent_at ?? this.clock.now()).toISOString(),
            hospitalRecordNote: null,
          }
        : latest.status === 'refused'
          ? {
              hospitalRecordState: 'refused',
              hospitalRecordAt: this.clock.now().toISOString(),
              hospitalRecordNote: (latest.last_error ?? 'refused').slice(0, 1000),
            }
          : {
              hospitalRecordState: 'waiting',
              hospitalRecordAt: new Date(latest.created_at).toISOString(),
              hospitalRecordNote: latest.last_error
                ? `will retry: ${latest.last_error}`.slice(0, 1000)
                : null,
            };
    await this.em.fork().transactional(async (em) => {
      const current = await this.store.byId(em, visitId);
      if (!current || current.deleted) return;
      const changed = Object.entries(fields).some(
        ([field, value]) => (current.fields[field] ?? null) !== value,
      );
      if (!changed) return;
      const written = await this.writer.writeFields(em, {
        recordId: visitId,
        fields,
        by: str(current.fields.signedBy) ?? str(current.fields.clinicianId) ?? '',
        deviceId: null,
        now: this.clock.now(),
        check: (record) => !record.deleted && record.collection === 'visit',
      });
      if (!written) return;
      await this.audit.record(em, {
        kind: `fhir.handoff_${String(fields.hospitalRecordState)}`,
        actorId: null,
        deviceId: null,
        siteId: current.siteId,
        subjectType: 'visit',
        subjectId: visitId,
        detail: {
          occasion: latest.occasion,
          attempts: latest.attempts,
          ...(latest.location ? { location: latest.location } : {}),
          ...(latest.last_error ? { reason: latest.last_error } : {}),
        },
      });
    });
  }
}
