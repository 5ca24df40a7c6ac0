// The charting screens' domain queries and edits (Today, Chart, Visit), built on the generic
// records repository: today's visits at a site, a patient's visits newest first, a visit's
// Sections, saving a Section field, signing, countersigning and addenda. The visit's lock lives
// here as well as on screen, so a signed visit's content cannot change through this layer.
import {
  pickSectionRecord,
  SECTION_COLLECTIONS,
  type RecordFieldsInput,
  type SectionCollectionName,
  type SessionUser,
} from '@fuselight/shared';
import { type EditContext, type LocalRecord, type RecordsRepository } from '../records-repository';
import type { VisitPartCollection } from '../query-keys';
import { sectionRecordId } from '../record-ids';
import {
  addendumFromRecord,
  byWrittenAt,
  canAddAddendum,
  canCountersign,
  canEditSections,
  canSign,
  parseLegacyAddendum,
  type Addendum,
} from './visit-rules';

export interface TodayEntry {
  visit: LocalRecord<'visit'>;
  patient: LocalRecord<'patient'> | null;
}

export type VisitSectionRecords = {
  [C in SectionCollectionName]?: LocalRecord<C>;
};

export interface VisitBundle {
  visit: LocalRecord<'visit'>;
  patient: LocalRecord<'patient'> | null;
  sections: VisitSectionRecords;
  addenda: Addendum[];
}

/** The collections a visit bundle is read from besides the visit and patient. */
export const VISIT_PART_COLLECTIONS: readonly VisitPartCollection[] = [
  ...SECTION_COLLECTIONS,
  'addendum',
];

/** A visit's records by collection, each list sorted by id (as `visitPart` reads them). */
export type VisitParts = { [C in VisitPartCollection]?: LocalRecord<C>[] };

/**
 * A visit bundle from its parts: the earliest-made record of each Section collection is the
 * Section (a second one made elsewhere offline is shown by the sync's Disputes), and the Addenda
 * are the `addendum` records with any kept as plan records by earlier app versions.
 */
export function assembleVisitBundle(
  visit: LocalRecord<'visit'>,
  patient: LocalRecord<'patient'> | null,
  parts: VisitParts,
): VisitBundle {
  const sections: VisitSectionRecords = {};
  const addenda: Addendum[] = [];
  for (const collection of SECTION_COLLECTIONS) {
    const records = parts[collection] ?? [];
    if (collection === 'plan') {
      for (const record of [...records].sort(byIdAscending)) {
        const legacy = parseLegacyAddendum(record as LocalRecord<'plan'>);
        if (legacy) addenda.push(legacy);
      }
    }
    // The shared rule: the Section record with the visit's derived id, else the lowest id.
    const chosen = pickSectionRecord(
      visit.id,
      collection,
      records as readonly LocalRecord<typeof collection>[],
    );
    if (chosen) (sections as Record<string, unknown>)[collection] = chosen;
  }
  for (const record of parts.addendum ?? []) addenda.push(addendumFromRecord(record));
  addenda.sort(byWrittenAt);
  return { visit, patient, sections, addenda };
}

/** Thrown when an edit would change a signed visit's content. */
export class VisitLockedError extends Error {
  override readonly name = 'VisitLockedError';
}

/** An edit the visit's state or the person's role does not allow, in words. */
export class VisitRuleError extends Error {
  override readonly name = 'VisitRuleError';
}

/** Today's date on this tablet as YYYY-MM-DD (the tablet's own time zone). */
export function localDate(now: Date = new Date()): string {
  const y = now.getFullYear();
  const m = String(now.getMonth() + 1).padStart(2, '0');
  const d = String(now.getDate()).padStart(2, '0');
  return `${y}-${m}-${d}`;
}

function byIdAscending<T extends { id: string }>(a: T, b: T): number {
  return a.id < b.id ? -1 : a.id > b.id ? 1 : 0;
}

function patientName(patient: LocalRecord<'patient'> | null): string {
  return patient ? `${patient.fields.familyName} ${patient.fields.givenName}` : '';
}

export class ChartingRepository {
  /** One chain of writes per Section, so a first edit's create lands before the next update. */
  private readonly sectionWrites = new Map<string, Promise<unknown>>();

  constructor(private readonly records: RecordsRepository) {}

  /** Visits dated today at a site (drafts first, then by patient name), with their patients. */
  async todaysVisits(siteId: string, today: string): Promise<TodayEntry[]> {
    const visits = (await this.records.list('visit', { siteId })).filter(
      (visit) => visit.fields.date === today,
    );
    const entries = await Promise.all(
      visits.map(async (visit) => ({
        visit,
        patient: (await this.records.get('patient', visit.fields.patientId)) ?? null,
      })),
    );
    return entries.sort(
      (a, b) =>
        Number(a.visit.fields.status !== 'draft') - Number(b.visit.fields.status !== 'draft') ||
        patientName(a.patient).localeCompare(patientName(b.patient)),
    );
  }

  /**
   * Patients on the tablet matching what was typed: name words, clinic number and date of birth
   * (whole or in part, "2016-04-09" or "9/4/2016"), from the patient directory in memory.
   */
  async searchPatients(query: string, limit = 30): Promise<LocalRecord<'patient'>[]> {
    return this.records.searchPatients(query, { limit });
  }

  /** Starts loading what the patient search reads, in the background. */
  warmPatientSearch(): void {
    this.records.warmPatientSearch();
  }

  async patient(patientId: string): Promise<LocalRecord<'patient'> | null> {
    return (await this.records.get('patient', patientId)) ?? null;
  }

  /** A patient's visits, newest first (same-day visits: the later-made first). */
  async patientVisits(patientId: string): Promise<LocalRecord<'visit'>[]> {
    const visits = await this.records.listByField('visit', 'patientId', patientId);
    return visits.sort(
      (a, b) => b.fields.date.localeCompare(a.fields.date) || -byIdAscending(a, b),
    );
  }

  /** Every record of some Section collections for a patient, keyed by visit id. */
  async patientSections<C extends SectionCollectionName>(
    patientId: string,
    collections: readonly C[],
  ): Promise<Map<string, VisitSectionRecords>> {
    const byVisit = new Map<string, VisitSectionRecords>();
    for (const collection of collections) {
      const placed = new Map<string, LocalRecord<C>[]>();
      for (const record of await this.records.listByField(collection, 'patientId', patientId)) {
        const visitId = (record.fields as { visitId: string }).visitId;
        placed.set(visitId, [...(placed.get(visitId) ?? []), record]);
      }
      for (const [visitId, records] of placed) {
        // The visit's Section by the shared rule (the derived id, else the lowest id); a second
        // record made elsewhere offline is shown by the sync's Disputes, not mixed in here.
        const chosen = pickSectionRecord(visitId, collection, records);
        if (!chosen) continue;
        const sections = byVisit.get(visitId) ?? {};
        (sections as Record<string, unknown>)[collection] = chosen;
        byVisit.set(visitId, sections);
      }
    }
    return byVisit;
  }

  /**
   * A visit with its patient, its Sections (one record per collection) and its Addenda, oldest
   * first (its `addendum` records, and any kept as plan records by earlier app versions).
   */
  async visitBundle(visitId: string): Promise<VisitBundle | null> {
    const visit = await this.visit(visitId);
    if (!visit) return null;
    const patient = await this.patient(visit.fields.patientId);
    const parts: VisitParts = {};
    await Promise.all(
      VISIT_PART_COLLECTIONS.map(async (collection) => {
        (parts as Record<string, unknown>)[collection] = await this.visitPart(visitId, collection);
      }),
    );
    return assembleVisitBundle(visit, patient, parts);
  }

  /** The visit record, or null when the tablet does not hold it or it was deleted. */
  async visit(visitId: string): Promise<LocalRecord<'visit'> | null> {
    const visit = await this.records.get('visit', visitId);
    return visit && !visit.deleted ? visit : null;
  }

  /** One collection's records placed on a visit (a Section's, or the Addenda), by id. */
  async visitPart<C extends VisitPartCollection>(
    visitId: string,
    collection: C,
  ): Promise<LocalRecord<C>[]> {
    return (await this.records.listByField(collection, 'visitId', visitId)).sort(byIdAscending);
  }

  async createPatient(fields: RecordFieldsInput<'patient'>, ctx: EditContext): Promise<string> {
    return this.records.create('patient', fields, ctx);
  }

  async updatePatient(
    patientId: string,
    fields: Partial<RecordFieldsInput<'patient'>>,
    ctx: EditContext,
  ): Promise<void> {
    await this.records.update('patient', patientId, fields, ctx);
  }

  /** Starts a draft visit today for a patient at the active site. */
  async startVisit(
    input: {
      patientId: string;
      siteId: string;
      clinicianId: string;
      date: string;
      reason?: string;
    },
    ctx: EditContext,
  ): Promise<string> {
    return this.records.create(
      'visit',
      {
        siteId: input.siteId,
        patientId: input.patientId,
        date: input.date,
        clinicianId: input.clinicianId,
        status: 'draft',
        needsCountersign: false,
        ...(input.reason ? { reason: input.reason } : {}),
      },
      ctx,
    );
  }

  /** Changes fields of the visit itself (reason, needs countersigning) while it is a draft. */
  async updateDraftVisit(
    visitId: string,
    fields: Pick<Partial<RecordFieldsInput<'visit'>>, 'reason' | 'needsCountersign'>,
    ctx: EditContext,
  ): Promise<void> {
    const visit = await this.requireVisit(visitId);
    if (!canEditSections(visit)) {
      throw new VisitLockedError('This visit is signed; write an Addendum instead.');
    }
    await this.records.update('visit', visitId, fields, ctx);
  }

  /**
   * Saves changed fields of one Section of a draft visit, creating the Section on its first
   * edit. Resolves once the edit and its Outbox entry are in IndexedDB.
   */
  async saveSection<C extends SectionCollectionName>(
    visitId: string,
    collection: C,
    fields: Record<string, unknown>,
    ctx: EditContext,
  ): Promise<string> {
    const key = `${visitId}:${collection}`;
    const previous = this.sectionWrites.get(key) ?? Promise.resolve();
    const next = previous
      .catch(() => undefined)
      .then(() => this.writeSection(visitId, collection, fields, ctx));
    this.sectionWrites.set(key, next);
    try {
      return await next;
    } finally {
      if (this.sectionWrites.get(key) === next) this.sectionWrites.delete(key);
    }
  }

  private async writeSection<C extends SectionCollectionName>(
    visitId: string,
    collection: C,
    fields: Record<string, unknown>,
    ctx: EditContext,
  ): Promise<string> {
    const visit = await this.requireVisit(visitId);
    if (!canEditSections(visit)) {
      throw new VisitLockedError(
        'This visit is signed; its Sections are locked. Write an Addendum.',
      );
    }
    // One record per Section and visit, with an id every tablet derives alike, so two tablets
    // that start the same Section offline write one record and the server merges their fields.
    // Older records with random ids are still found and kept.
    const sharedId = sectionRecordId(visitId, collection);
    const existing = pickSectionRecord(
      visitId,
      collection,
      await this.records.listByField(collection, 'visitId', visitId),
    );
    if (existing) {
      await this.records.update(collection, existing.id, fields as never, ctx);
      return existing.id;
    }
    const tombstone = await this.records.get(collection, sharedId);
    if (tombstone) {
      await this.records.restore(collection, sharedId, ctx);
      await this.records.update(collection, sharedId, fields as never, ctx);
      return sharedId;
    }
    return this.records.create(
      collection,
      {
        siteId: visit.fields.siteId,
        visitId,
        patientId: visit.fields.patientId,
        ...fields,
      } as never,
      ctx,
      { id: sharedId },
    );
  }

  /** Signs a draft visit: status signed, signedBy and signedAt; its content is locked after. */
  async sign(visitId: string, user: SessionUser, ctx: EditContext): Promise<void> {
    const visit = await this.requireVisit(visitId);
    const why = canSign(visit, user);
    if (why !== true) throw new VisitRuleError(why);
    await this.records.update(
      'visit',
      visitId,
      { status: 'signed', signedBy: user.id, signedAt: new Date(ctx.nowMs).toISOString() },
      ctx,
    );
  }

  /** A supervisor's countersignature on a signed visit that needs it. */
  async countersign(visitId: string, user: SessionUser, ctx: EditContext): Promise<void> {
    const visit = await this.requireVisit(visitId);
    const why = canCountersign(visit, user);
    if (why !== true) throw new VisitRuleError(why);
    await this.records.update(
      'visit',
      visitId,
      {
        status: 'countersigned',
        countersignedBy: user.id,
        countersignedAt: new Date(ctx.nowMs).toISOString(),
      },
      ctx,
    );
  }

  /**
   * An Addendum to a signed visit: a new `addendum` record beside the signed content, never an
   * edit of it. Resolves once the record and its Outbox entry are in IndexedDB.
   */
  async addAddendum(
    visitId: string,
    input: { text: string; author: SessionUser },
    ctx: EditContext,
  ): Promise<string> {
    const visit = await this.requireVisit(visitId);
    const why = canAddAddendum(visit, input.author);
    if (why !== true) throw new VisitRuleError(why);
    const text = input.text.trim();
    if (text === '') throw new VisitRuleError('Write what the Addendum adds or corrects.');
    return this.records.create(
      'addendum',
      {
        siteId: visit.fields.siteId,
        visitId,
        patientId: visit.fields.patientId,
        authorId: input.author.id,
        writtenAt: new Date(ctx.nowMs).toISOString(),
        text,
      },
      ctx,
    );
  }

  private async requireVisit(visitId: string): Promise<LocalRecord<'visit'>> {
    const visit = await this.records.get('visit', visitId);
    if (!visit || visit.deleted) throw new VisitRuleError('This visit is not on this tablet.');
    return visit;
  }
}
