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
  buildClinicLetter,
  buildExerciseHandout,
  ClinicalInputError,
  type CollectionName,
  type LetterLayout,
  type RecordFields,
  type VisitFindings,
} from '@fuselight/shared';
import { sqlRows } from '../records/sql';
import type { StoredRecord } from '../records/stored-record';
import { RecordAccess } from './record-access';

const LETTER_SECTIONS = [
  'visualAcuity',
  'coverTest',
  'prismCoverTest',
  'simultaneousPerception',
  'amblyoscopeAngles',
  'fusion',
  'fusionalRanges',
  'nearPointConvergence',
  'stereoacuity',
  'plan',
] as const satisfies readonly CollectionName[];

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
    const patientFields = patient.fields as RecordFields<'patient'>;

    const visits = (await this.records.findBy(['visit'], 'patientId', [patient.id], em)).filter(
      (v) => (v.fields as RecordFields<'visit'>).date <= visitFields.date,
    );
    const sections = await this.records.findBy(
      LETTER_SECTIONS,
      'visitId',
      visits.map((v) => v.id),
      em,
    );
    const findingsOf = (v: StoredRecord): VisitFindings => {
      const vf = v.fields as RecordFields<'visit'>;
      const out: VisitFindings = { visit: { id: v.id, date: vf.date, reason: vf.reason ?? null } };
      for (const section of sections) {
        if ((section.fields as { visitId?: string }).visitId !== v.id) continue;
        (out as unknown as Record<string, unknown>)[section.collection] = section.fields;
      }
      return out;
    };
    const current = findingsOf(visit);
    const earlier = visits.filter((v) => v.id !== visit.id).map(findingsOf);

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
    const common = {
      clinic: { name: site?.name ?? 'Fuselight clinic', address: site?.address ?? null },
      patient: patientFields,
      letter: { ...fields, id: letter.id },
      clinician: {
        name: person?.name ?? 'The clinician',
        role: ROLE_WORDS[person?.role ?? ''] ?? 'Orthoptist',
      },
      issuedOn: (fields.finalisedAt ?? letter.createdAt).slice(0, 10),
    };
    try {
      const layout =
        fields.kind === 'handout'
          ? buildExerciseHandout({ ...common, visit: current.visit, plan: current.plan })
          : buildClinicLetter({ ...common, current, earlier });
      return { letter, patient, layout };
    } catch (error) {
      if (error instanceof ClinicalInputError) {
        throw new UnprocessableEntityException(`letter ${letterId}: ${error.message}`);
      }
      throw error;
    }
  }
}
