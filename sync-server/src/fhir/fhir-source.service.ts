// Gathers what one visit's FHIR export says: the visit, its patient, every live record placed on
// the visit (its Sections and Addenda) read through the records module, and the names of the
// people it names.
import { EntityManager } from '@mikro-orm/postgresql';
import { Inject, Injectable } from '@nestjs/common';
import { SECTION_COLLECTIONS, type JsonValue } from '@fuselight/shared';
import { RecordStore } from '../records/record-store';
import { jsonParam, sqlRows } from '../database/sql';
import type { StoredRecord } from '../records/stored-record';
import type { VisitExportInput } from './visit-bundle';

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

const str = (value: JsonValue | undefined): string | null =>
  typeof value === 'string' ? value : null;

export type VisitSource =
  { found: false } | { found: true; visit: StoredRecord; input: VisitExportInput | null };

@Injectable()
export class FhirSourceService {
  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(RecordStore) private readonly store: RecordStore,
  ) {}

  /** The live visit and what its export reads; input is null when its patient is not on the server. */
  async load(visitId: string, em: EntityManager = this.em.fork()): Promise<VisitSource> {
    const visit = await this.store.live(em, 'visit', visitId);
    if (!visit) return { found: false };
    return { found: true, visit, input: await this.inputOf(visit, em) };
  }

  async inputOf(visit: StoredRecord, em: EntityManager): Promise<VisitExportInput | null> {
    const patientId = str(visit.fields.patientId);
    const patient = patientId ? await this.store.live(em, 'patient', patientId) : null;
    if (!patient) return null;
    const visitRecords = await this.store.liveWhere(
      em,
      [...SECTION_COLLECTIONS, 'addendum'],
      'visitId',
      [visit.id],
    );
    const peopleIds = [
      str(visit.fields.clinicianId),
      str(visit.fields.signedBy),
      str(visit.fields.countersignedBy),
      ...visitRecords.map((r) => (r.collection === 'addendum' ? str(r.fields.authorId) : null)),
    ].filter((id): id is string => id !== null && UUID.test(id));
    return { visit, patient, visitRecords, people: await this.people(em, peopleIds) };
  }

  private async people(
    em: EntityManager,
    ids: readonly string[],
  ): Promise<Map<string, { name: string }>> {
    const found = new Map<string, { name: string }>();
    if (ids.length === 0) return found;
    const rows = await sqlRows<{ id: string; name: string }>(
      em,
      `select "id", "name" from "app_user" where "id" in (select jsonb_array_elements_text(?::jsonb)::uuid)`,
      [jsonParam([...new Set(ids)])],
    );
    for (const row of rows) found.set(row.id, { name: row.name });
    return found;
  }
}
