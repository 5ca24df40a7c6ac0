// One visit as a FHIR R4 Bundle (docs/fhir.md): the Patient, the Practitioners who signed and
// countersigned, an Encounter, a Provenance per signature, countersignature and Addendum, one
// Observation per recorded finding and one per computed interpretation (with CLINICAL_CAUTION in
// its note). Pure: everything it says comes from the records it is given.
import type {
  Bundle,
  BundleEntry,
  CodeableConcept,
  Encounter,
  Observation,
  Patient,
  Practitioner,
  Provenance,
  Reference,
  Resource,
} from 'fhir/r4';
import { v5 as uuidv5 } from 'uuid';
import {
  ageOnDate,
  COLLECTION_LABELS,
  interpretVisit,
  pickSectionRecord,
  type JsonValue,
  type RecordFields,
  type SectionCollectionName,
  type VisitSectionValues,
} from '@fuselight/shared';
import type { StoredRecord } from '../records/stored-record';
import {
  ACT_CODE,
  ACUITY_CORRECTIONS,
  clinicNumberSystem,
  DATA_ABSENT_REASON,
  DATA_OPERATION,
  EXPORTED_SECTIONS,
  FINDING_FIELDS,
  fuselight,
  loinc,
  LOINC_UNCORRECTED_ACUITY,
  INTERPRETATION_CONCEPTS,
  OBSERVATION_CATEGORY,
  PROVENANCE_PARTICIPANT,
  SIGNATURE_TYPE,
  SNOMED,
  snomed,
  UCUM,
  UCUM_UNITS,
  type FindingField,
} from './fhir-codes';

/** Fuselight's namespace for the name-based ids of exported resources (a fixed random UUID). */
const FHIR_RESOURCE_NAMESPACE = '3b8d52c4-0f6e-4b7a-9d41-7c2e5a9f1b06';

export interface VisitExportInput {
  patient: StoredRecord;
  visit: StoredRecord;
  /** Every live record placed on the visit (Sections, Addenda); the Section rule picks. */
  visitRecords: readonly StoredRecord[];
  /** Names of the people the visit names (clinician, signer, countersigner, Addendum authors). */
  people: ReadonlyMap<string, { name: string }>;
}

export type ExportedResource = Patient | Practitioner | Encounter | Provenance | Observation;

const str = (value: JsonValue | undefined): string | null =>
  typeof value === 'string' && value !== '' ? value : null;

/** A stable id for a resource derived from a record (a finding of a Section, an interpretation). */
export function derivedId(...parts: string[]): string {
  return uuidv5(parts.join('/'), FHIR_RESOURCE_NAMESPACE);
}

const ref = (resource: Resource): Reference => ({
  reference: `urn:uuid:${resource.id!}`,
});

function practitionerOf(id: string, people: VisitExportInput['people']): Practitioner {
  const name = people.get(id)?.name ?? null;
  return {
    resourceType: 'Practitioner',
    id,
    ...(name ? { name: [{ text: name }] } : {}),
  };
}

export function patientOf(record: StoredRecord): Patient {
  const f = record.fields as Partial<RecordFields<'patient'>>;
  const sex = f.sex ?? null;
  return {
    resourceType: 'Patient',
    id: record.id,
    identifier: f.clinicNumber
      ? [{ use: 'usual', system: clinicNumberSystem(record.siteId), value: f.clinicNumber }]
      : [],
    name: [
      {
        use: 'official',
        ...(f.familyName ? { family: f.familyName } : {}),
        ...(f.givenName ? { given: [f.givenName] } : {}),
      },
    ],
    ...(f.dateOfBirth ? { birthDate: f.dateOfBirth } : {}),
    // Fuselight's sex choices are FHIR's administrative-gender codes; "not recorded" is left out.
    ...(sex && sex !== 'unknown' ? { gender: sex } : {}),
  };
}

/** The eye a finding belongs to, for the Sections recorded per eye. */
function eyeOf(finding: FindingField): 'right' | 'left' | null {
  if (!['visualAcuity', 'accommodation', 'motility'].includes(finding.collection)) return null;
  if (finding.field.startsWith('right')) return 'right';
  if (finding.field.startsWith('left')) return 'left';
  return null;
}

function acuityCode(finding: FindingField): CodeableConcept {
  const own = fuselight(finding.code, finding.display);
  if (finding.collection !== 'visualAcuity' || !finding.field.endsWith('LogMar')) {
    return { coding: [own], text: finding.display };
  }
  const distance = finding.field.includes('Distance');
  const loincTerm = LOINC_UNCORRECTED_ACUITY[finding.field];
  return {
    coding: [
      snomed(distance ? SNOMED.distanceVisualAcuity : SNOMED.nearVisualAcuity),
      ...(loincTerm ? [loinc(loincTerm)] : []),
      own,
    ],
    text: finding.display,
  };
}

function acuityMethod(finding: FindingField): CodeableConcept | null {
  if (finding.collection !== 'visualAcuity') return null;
  for (const [key, display] of Object.entries(ACUITY_CORRECTIONS)) {
    if (finding.field.includes(key)) {
      return {
        coding: [fuselight(`acuity-correction.${key.toLowerCase()}`, display)],
        text: display,
      };
    }
  }
  return null;
}

type ObservationValue = Pick<
  Observation,
  'valueQuantity' | 'valueCodeableConcept' | 'valueBoolean' | 'valueString'
>;

const TRIAL_WORDS: Record<string, string> = { toward: 'toward', away: 'away' };

/** The stored value as an Observation value, or null when it cannot be one. */
export function observationValue(finding: FindingField, value: JsonValue): ObservationValue | null {
  const { meta } = finding;
  if (meta.kind === 'number' && typeof value === 'number') {
    const unit = meta.unit ? UCUM_UNITS[meta.unit] : null;
    return {
      valueQuantity: {
        value,
        ...(unit ? { unit: unit.unit, system: UCUM, code: unit.code } : {}),
      },
    };
  }
  if (meta.kind === 'choice' && typeof value === 'string') {
    const word = meta.options?.find((o) => o.value === value)?.label ?? value;
    return {
      valueCodeableConcept: {
        coding: [fuselight(`${finding.code}.${value}`, word)],
        text: word,
      },
    };
  }
  if (meta.kind === 'boolean' && typeof value === 'boolean') return { valueBoolean: value };
  if (meta.kind === 'text' && typeof value === 'string') {
    return value.trim() === '' ? null : { valueString: value };
  }
  if (Array.isArray(value)) {
    if (value.length === 0) return null;
    if (finding.field === 'trials') {
      // Gross stereopsis trials in order: the picture shown, the answer, and whether they match.
      const trials = value.map((trial, index) => {
        const t = trial as { presented?: string; answer?: string; correct?: boolean };
        return `${index + 1}. shown ${TRIAL_WORDS[t.presented ?? ''] ?? '?'}, answered ${
          TRIAL_WORDS[t.answer ?? ''] ?? '?'
        } (${t.correct ? 'correct' : 'wrong'})`;
      });
      return { valueString: trials.join('; ') };
    }
    const words = value.map(
      (item) => meta.options?.find((o) => o.value === item)?.label ?? String(item),
    );
    return { valueString: words.join('; ') };
  }
  return null;
}

interface AddendumNote {
  id: string;
  authorId: string;
  writtenAt: string;
  text: string;
  amendedCollection: string | null;
  amendedRecordId: string | null;
  amendedField: string | null;
}

function addendaOf(records: readonly StoredRecord[], visitId: string): AddendumNote[] {
  return records
    .filter((r) => r.collection === 'addendum' && !r.deleted && r.fields.visitId === visitId)
    .map((r) => ({
      id: r.id,
      authorId: str(r.fields.authorId) ?? '',
      writtenAt: str(r.fields.writtenAt) ?? r.createdAt,
      text: str(r.fields.text) ?? '',
      amendedCollection: str(r.fields.amendedCollection),
      amendedRecordId: str(r.fields.amendedRecordId),
      amendedField: str(r.fields.amendedField),
    }))
    .sort((a, b) => a.writtenAt.localeCompare(b.writtenAt) || a.id.localeCompare(b.id));
}

/** The visit's Sections as recorded (the Section rule picks one record per collection). */
export function sectionsOfVisit(
  visitId: string,
  records: readonly StoredRecord[],
): Map<SectionCollectionName, StoredRecord> {
  const picked = new Map<SectionCollectionName, StoredRecord>();
  for (const collection of EXPORTED_SECTIONS) {
    const own = records.filter((r) => r.collection === collection && r.fields.visitId === visitId);
    const record = pickSectionRecord(visitId, collection, own);
    if (record) picked.set(collection, record);
  }
  return picked;
}

export function buildVisitBundle(
  input: VisitExportInput,
  options: { type: 'collection' | 'transaction' },
): Bundle {
  return bundleOf(visitResources(input), options.type);
}

export function bundleOf(
  resources: readonly Resource[],
  type: 'collection' | 'transaction',
): Bundle {
  const entry: BundleEntry[] = resources.map((resource) => ({
    fullUrl: `urn:uuid:${resource.id!}`,
    resource,
    ...(type === 'transaction'
      ? { request: { method: 'PUT', url: `${resource.resourceType}/${resource.id!}` } }
      : {}),
  }));
  return { resourceType: 'Bundle', type, entry };
}

/** Every resource of a visit's export, in the order the Bundle lists them. */
export function visitResources(input: VisitExportInput): ExportedResource[] {
  const { visit, patient } = input;
  const v = visit.fields as Partial<RecordFields<'visit'>>;
  const status = v.status ?? 'draft';
  const signed = status === 'signed' || status === 'countersigned';
  const date = v.date ?? visit.createdAt.slice(0, 10);
  const addenda = signed ? addendaOf(input.visitRecords, visit.id) : [];

  const patientResource = patientOf(patient);
  const practitioners = new Map<string, Practitioner>();
  const practitioner = (id: string | null): Practitioner | null => {
    if (!id) return null;
    const known = practitioners.get(id) ?? practitionerOf(id, input.people);
    practitioners.set(id, known);
    return known;
  };
  const signer = signed ? practitioner(str(v.signedBy) ?? str(v.clinicianId)) : null;
  const countersigner = status === 'countersigned' ? practitioner(str(v.countersignedBy)) : null;
  const clinician = practitioner(str(v.clinicianId));

  const encounter: Encounter = {
    resourceType: 'Encounter',
    id: visit.id,
    status: signed ? 'finished' : 'in-progress',
    class: { system: ACT_CODE, code: 'AMB', display: 'ambulatory' },
    ...(v.reason ? { reasonCode: [{ text: v.reason }] } : {}),
    subject: ref(patientResource),
    ...(clinician ? { participant: [{ individual: ref(clinician) }] } : {}),
    period: { start: date, ...(signed ? { end: date } : {}) },
  };

  // Findings: one Observation per recorded field of the visit's Sections.
  const sections = sectionsOfVisit(visit.id, input.visitRecords);
  const observations: Observation[] = [];
  const findingIds = new Map<SectionCollectionName, string[]>();
  const base = (id: string, code: CodeableConcept): Observation => ({
    resourceType: 'Observation',
    id,
    status: signed ? 'final' : 'preliminary',
    category: [
      { coding: [{ system: OBSERVATION_CATEGORY, code: 'exam', display: 'Exam' }], text: 'Exam' },
    ],
    code,
    subject: ref(patientResource),
    encounter: ref(encounter),
    effectiveDateTime: date,
  });
  for (const [collection, record] of sections) {
    const ids: string[] = [];
    const skipped = str(record.fields.skippedReason);
    if (skipped) {
      const id = derivedId(record.id, 'skipped');
      observations.push({
        ...base(id, {
          coding: [fuselight(`section.${collection}`, COLLECTION_LABELS[collection])],
          text: COLLECTION_LABELS[collection],
        }),
        dataAbsentReason: {
          coding: [{ system: DATA_ABSENT_REASON, code: 'not-performed', display: 'Not Performed' }],
          text: `Not done: ${skipped}`,
        },
      });
      ids.push(id);
    }
    for (const finding of FINDING_FIELDS) {
      if (finding.collection !== collection) continue;
      const stored = record.fields[finding.field];
      if (stored === undefined || stored === null) continue;
      const value = observationValue(finding, stored);
      if (!value) continue;
      const id = derivedId(record.id, finding.field);
      const eye = eyeOf(finding);
      const method = acuityMethod(finding);
      const notation =
        finding.collection === 'visualAcuity' && finding.field.endsWith('LogMar')
          ? str(record.fields[finding.field.replace(/LogMar$/, 'Notation')])
          : null;
      observations.push({
        ...base(id, acuityCode(finding)),
        ...(eye
          ? {
              bodySite: {
                coding: [snomed(eye === 'right' ? SNOMED.rightEye : SNOMED.leftEye)],
                text: eye === 'right' ? 'Right eye' : 'Left eye',
              },
            }
          : {}),
        ...(method ? { method } : {}),
        ...value,
        ...(notation ? { note: [{ text: `Entered as ${notation}` }] } : {}),
      });
      ids.push(id);
    }
    if (ids.length > 0) findingIds.set(collection, ids);
  }

  // Interpretations, computed by the shared rules the Visit screen and letters use.
  const sectionValues: VisitSectionValues = {};
  for (const [collection, record] of sections) sectionValues[collection] = record.fields;
  const age = ageOnDate((patient.fields as Partial<RecordFields<'patient'>>).dateOfBirth, date);
  const interpreted = interpretVisit(sectionValues, age === undefined ? {} : { ageYears: age });
  const interpretationSources: Record<string, SectionCollectionName[]> = {
    correspondence: ['amblyoscopeAngles'],
    bsv: ['simultaneousPerception', 'fusion', 'grossStereopsis', 'stereoacuity'],
    ranges: ['fusionalRanges', 'amblyoscopeAngles'],
    npc: ['nearPointConvergence'],
    accommodation: ['accommodation'],
    acuity: ['visualAcuity'],
  };
  for (const item of interpreted.items) {
    const display = INTERPRETATION_CONCEPTS[item.key];
    const derivedFrom = (interpretationSources[item.key] ?? []).flatMap((collection) =>
      (findingIds.get(collection) ?? []).map((id) => ({ reference: `urn:uuid:${id}` })),
    );
    observations.push({
      ...base(derivedId(visit.id, 'interpretation', item.key), {
        coding: [fuselight(`interpretation.${item.key}`, display)],
        text: item.title,
      }),
      valueString: item.lines.join(' '),
      ...(derivedFrom.length > 0 ? { derivedFrom } : {}),
      note: [
        { text: interpreted.caution },
        ...(item.basis ? [{ text: `Basis: ${item.basis}` }] : []),
      ],
    });
  }

  // Addenda: one naming a field amends that finding; one in free text amends the whole visit
  // (its findings and interpretations).
  if (addenda.length > 0) {
    for (const observation of observations) {
      const notes = addenda.filter((a) => {
        if (!a.amendedField) return true;
        const record = a.amendedRecordId
          ? [...sections.values()].find((r) => r.id === a.amendedRecordId)
          : a.amendedCollection
            ? sections.get(a.amendedCollection as SectionCollectionName)
            : undefined;
        return record !== undefined && observation.id === derivedId(record.id, a.amendedField);
      });
      if (notes.length === 0) continue;
      observation.status = 'amended';
      observation.note = [
        ...(observation.note ?? []),
        ...notes.map((a) => ({
          ...(input.people.get(a.authorId)
            ? { authorString: input.people.get(a.authorId)!.name }
            : {}),
          time: a.writtenAt,
          text: `Addendum: ${a.text}`,
        })),
      ];
    }
  }

  // Provenance: the signature, the countersignature and each Addendum.
  const provenances: Provenance[] = [];
  const targets = [ref(encounter), ...observations.map(ref)];
  const signedAt = str(v.signedAt);
  if (signer && signedAt) {
    provenances.push({
      resourceType: 'Provenance',
      id: derivedId(visit.id, 'signed', signedAt),
      target: targets,
      recorded: signedAt,
      activity: {
        coding: [{ system: DATA_OPERATION, code: 'CREATE', display: 'create' }],
        text: 'Signed',
      },
      agent: [
        {
          type: { coding: [{ system: PROVENANCE_PARTICIPANT, code: 'author', display: 'Author' }] },
          who: ref(signer),
        },
      ],
      signature: [
        {
          type: [
            {
              system: SIGNATURE_TYPE,
              code: '1.2.840.10065.1.12.1.1',
              display: "Author's Signature",
            },
          ],
          when: signedAt,
          who: ref(signer),
        },
      ],
    });
  }
  const countersignedAt = str(v.countersignedAt);
  if (countersigner && countersignedAt) {
    provenances.push({
      resourceType: 'Provenance',
      id: derivedId(visit.id, 'countersigned', countersignedAt),
      target: targets,
      recorded: countersignedAt,
      activity: {
        coding: [{ system: DATA_OPERATION, code: 'UPDATE', display: 'revise' }],
        text: 'Countersigned',
      },
      agent: [
        {
          type: {
            coding: [{ system: PROVENANCE_PARTICIPANT, code: 'verifier', display: 'Verifier' }],
          },
          who: ref(countersigner),
        },
      ],
      signature: [
        {
          type: [
            {
              system: SIGNATURE_TYPE,
              code: '1.2.840.10065.1.12.1.5',
              display: 'Verification Signature',
            },
          ],
          when: countersignedAt,
          who: ref(countersigner),
        },
      ],
    });
  }
  for (const addendum of addenda) {
    const author = practitioner(addendum.authorId || null);
    const amended = observations.filter((o) =>
      o.note?.some((n) => n.time === addendum.writtenAt && n.text === `Addendum: ${addendum.text}`),
    );
    provenances.push({
      resourceType: 'Provenance',
      id: derivedId(addendum.id, 'addendum'),
      target: [ref(encounter), ...amended.map(ref)],
      recorded: addendum.writtenAt,
      activity: {
        coding: [{ system: DATA_OPERATION, code: 'UPDATE', display: 'revise' }],
        text: 'Addendum',
      },
      reason: [{ text: addendum.text }],
      agent: [
        {
          type: { coding: [{ system: PROVENANCE_PARTICIPANT, code: 'author', display: 'Author' }] },
          ...(author ? { who: ref(author) } : { who: { display: 'Unknown author' } }),
        },
      ],
    });
  }

  return [patientResource, ...practitioners.values(), encounter, ...provenances, ...observations];
}
