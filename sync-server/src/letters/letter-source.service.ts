// Gathers what a letter says from the synced records (the letter, its visit and patient, the
// visit's sections, the patient's earlier visits, the site's letterhead and the clinician's name)
// and builds the shared layout, so the server mails the same letter the tablet shows.
import { EntityManager } from '@mikro-orm/postgresql';
import {
  Inject,
  Injectable,
  NotFoundException,
  UnprocessableEntityException,
} from '@nestjs/common';
import {
  ClinicalInputError,
  earlierVisitsOf,
  LETTER_SECTION_COLLECTIONS,
  letterLayoutOf,
  type LetterLayout,
  type RecordFields,
} from '@fuselight/shared';
import { CLOCK, type Clock } from '../common/clock.provider';
import { sqlRows } from '../database/sql';
import type { StoredRecord } from '../records/stored-record';
import { RecordAccess } from './record-access';

const ROLE_WORDS: Record<string, string> = {
  orthoptist: 'Orthoptist',
  outreach: 'Outreach orthoptist',
  supervisor: 'Supervising orthoptist',
  admin: 'Administrator',
};

export interface LetterSource {
  letter: StoredRecord;
  patient: StoredRecord;
  layout: LetterLayout;
}

@Injectable()
export class LetterSourceService {
  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(RecordAccess) private readonly records: RecordAccess,
    @Inject(CLOCK) private readonly clock: Clock,
  ) {}

  async load(letterId: string): Promise<LetterSource> {
    const em = this.em.fork();
    const letter = await this.records.get('letter', letterId, em);
    if (!letter) throw new NotFoundException(`letter ${letterId} was not found`);
    const fields = letter.fields as Partial<RecordFields<'letter'>>;
    const visit = fields.visitId ? await this.records.get('visit', fields.visitId, em) : null;
    const patient = fields.patientId
      ? await this.records.get('patient', fields.patientId, em)
      : null;
    if (!visit)
      throw new UnprocessableEntityException(
        `letter ${letterId}: its visit ${fields.visitId} is not on the server yet`,
      );
    if (!patient)
      throw new UnprocessableEntityException(
        `letter ${letterId}: its patient ${fields.patientId} is not on the server yet`,
      );
    const visitFields = visit.fields as RecordFields<'visit'>;

    // Which of these feed the letter (each visit's Section, the earlier visits) is the shared
    // rule, the one the tablet applies to the letter it shows.
    const patientVisits = await this.records.findBy(['visit'], 'patientId', [patient.id], em);
    const sections = await this.records.findBy(
      LETTER_SECTION_COLLECTIONS,
      'visitId',
      [visit.id, ...earlierVisitsOf(visit, patientVisits).map((v) => v.id)],
      em,
    );

    const [site] = await sqlRows<{ name: string; address: string | null }>(
      em,
      `select "name", "address" from "site" where "id" = ?::uuid`,
      [letter.siteId],
    );
    const clinicianId = fields.finalisedBy ?? visitFields.signedBy ?? visitFields.clinicianId;
    const [person] = await sqlRows<{ name: string; role: string }>(
      em,
      `select "name", "role" from "app_user" where "id" = ?::uuid`,
      [clinicianId],
    );
    const context = {
      clinic: { name: site?.name ?? 'Fuselight clinic', address: site?.address ?? null },
      clinician: {
        name: person?.name ?? 'The clinician',
        role: ROLE_WORDS[person?.role ?? ''] ?? 'Orthoptist',
      },
      // The server's calendar day (UTC), the date of a letter that is not final yet.
      today: this.clock.now().toISOString().slice(0, 10),
    };
    try {
      const layout = letterLayoutOf({ letter, visit, patient, patientVisits, sections }, context);
      return { letter, patient, layout };
    } catch (error) {
      if (error instanceof ClinicalInputError) {
        throw new UnprocessableEntityException(`letter ${letterId}: ${error.message}`);
      }
      throw error;
    }
  }
}
