import type { Observation, Provenance } from 'fhir/r4';
import { describe, expect, it } from 'vitest';
import { sectionRecordId, type CollectionName, type JsonValue } from '@fuselight/shared';
import type { StoredRecord } from '../records/stored-record';
import { fhirErrors } from './testing/fhir-validator';
import { derivedId, visitResources } from './visit-bundle';

const SITE = '0190c6a0-0000-7000-8000-00000000a001';
const PATIENT = '0190c6a0-0000-7000-8000-00000000b001';
const VISIT = '0190c6a0-0000-7000-8000-00000000c001';
const CLINICIAN = '0190c6a0-0000-7000-8000-00000000d001';
const SUPERVISOR = '0190c6a0-0000-7000-8000-00000000d002';

function record(
  collection: CollectionName,
  id: string,
  fields: Record<string, JsonValue>,
): StoredRecord {
  return {
    id,
    collection,
    siteId: SITE,
    version: 1,
    deleted: false,
    fields: { siteId: SITE, ...fields },
    stamps: {},
    createdAt: '2026-11-30T10:00:00.000Z',
  };
}

const patient = record('patient', PATIENT, {
  givenName: 'Orla',
  familyName: 'Pennick',
  dateOfBirth: '2017-03-09',
  clinicNumber: 'HX-2231',
  sex: 'unknown',
});
const visit = record('visit', VISIT, {
  patientId: PATIENT,
  date: '2026-11-30',
  clinicianId: CLINICIAN,
  status: 'signed',
  signedBy: CLINICIAN,
  signedAt: '2026-11-30T10:42:00.000Z',
});
const anglesId = sectionRecordId(VISIT, 'amblyoscopeAngles');
const angles = record('amblyoscopeAngles', anglesId, {
  visitId: VISIT,
  patientId: PATIENT,
  objectiveHorizontalDeg: -8,
  subjectiveHorizontalDeg: -8,
});
const cover = record('coverTest', sectionRecordId(VISIT, 'coverTest'), {
  visitId: VISIT,
  patientId: PATIENT,
  skippedReason: 'Patient too tired',
});
const people = new Map([
  [CLINICIAN, { name: 'Wren Ashdown' }],
  [SUPERVISOR, { name: 'Hester Quaid' }],
]);

describe('the Bundle of one visit', () => {
  it('amends only the finding an Addendum names, with the Addendum as its note', () => {
    const addendum = record('addendum', '0190c6a0-0000-7000-8000-00000000e001', {
      visitId: VISIT,
      patientId: PATIENT,
      authorId: SUPERVISOR,
      writtenAt: '2026-12-01T08:00:00.000Z',
      text: 'Dispute resolved: objective angle −8° kept.',
      amendedCollection: 'amblyoscopeAngles',
      amendedRecordId: anglesId,
      amendedField: 'objectiveHorizontalDeg',
    });
    const resources = visitResources({
      patient,
      visit,
      visitRecords: [angles, cover, addendum],
      people,
    });
    for (const resource of resources) expect(fhirErrors(resource)).toEqual([]);
    const observations = resources.filter(
      (r): r is Observation => r.resourceType === 'Observation',
    );
    const amended = observations.filter((o) => o.status === 'amended').map((o) => o.id);
    expect(amended).toEqual([derivedId(anglesId, 'objectiveHorizontalDeg')]);
    const objective = observations.find((o) => o.id === amended[0])!;
    expect(objective.valueQuantity).toEqual({
      value: -8,
      unit: 'deg',
      system: 'http://unitsofmeasure.org',
      code: 'deg',
    });
    expect(objective.note).toEqual([
      {
        authorString: 'Hester Quaid',
        time: '2026-12-01T08:00:00.000Z',
        text: 'Addendum: Dispute resolved: objective angle −8° kept.',
      },
    ]);
    const provenance = resources.filter((r): r is Provenance => r.resourceType === 'Provenance');
    expect(provenance.map((p) => p.activity?.text)).toEqual(['Signed', 'Addendum']);
    expect(provenance[1]!.target.map((t) => t.reference)).toEqual([
      `urn:uuid:${VISIT}`,
      `urn:uuid:${amended[0]!}`,
    ]);
  });

  it('says a Section was not done with a data-absent reason, and leaves out a sex not recorded', () => {
    const resources = visitResources({ patient, visit, visitRecords: [cover], people });
    const skipped = resources.find(
      (r): r is Observation =>
        r.resourceType === 'Observation' && r.id === derivedId(cover.id, 'skipped'),
    )!;
    expect(skipped.dataAbsentReason).toEqual({
      coding: [
        {
          system: 'http://terminology.hl7.org/CodeSystem/data-absent-reason',
          code: 'not-performed',
          display: 'Not Performed',
        },
      ],
      text: 'Not done: Patient too tired',
    });
    expect(skipped.valueQuantity).toBeUndefined();
    const patientResource = resources.find((r) => r.resourceType === 'Patient')!;
    expect(patientResource).not.toHaveProperty('gender');
  });

  it('interprets correspondence from the recorded angles with the caution first in its note', () => {
    const resources = visitResources({ patient, visit, visitRecords: [angles], people });
    const interpretation = resources.find(
      (r): r is Observation =>
        r.resourceType === 'Observation' &&
        r.id === derivedId(VISIT, 'interpretation', 'correspondence'),
    )!;
    // Objective equal to subjective: normal retinal correspondence (docs/clinical-reference.md).
    expect(interpretation.valueString).toMatch(/NRC/);
    expect(interpretation.derivedFrom?.map((d) => d.reference).sort()).toEqual(
      [
        `urn:uuid:${derivedId(anglesId, 'objectiveHorizontalDeg')}`,
        `urn:uuid:${derivedId(anglesId, 'subjectiveHorizontalDeg')}`,
      ].sort(),
    );
    expect(interpretation.note?.[0]?.text).toMatch(/does not replace clinical judgement/);
  });

  it('codes uncorrected acuity with LOINC beside SNOMED CT, keeps the value as stored, and gives corrected acuity no LOINC code', () => {
    const acuityId = sectionRecordId(VISIT, 'visualAcuity');
    const acuity = record('visualAcuity', acuityId, {
      visitId: VISIT,
      patientId: PATIENT,
      rightDistanceUncorrectedLogMar: 0.18,
      leftDistanceUncorrectedLogMar: -0.08,
      rightNearUncorrectedLogMar: 0.3,
      leftNearUncorrectedLogMar: 0.1,
      rightDistanceCorrectedLogMar: 0,
    });
    const resources = visitResources({ patient, visit, visitRecords: [acuity], people });
    for (const resource of resources) expect(fhirErrors(resource)).toEqual([]);
    const observation = (field: string) =>
      resources.find(
        (r): r is Observation =>
          r.resourceType === 'Observation' && r.id === derivedId(acuityId, field),
      )!;
    const loincOf = (field: string) =>
      observation(field)
        .code.coding?.filter((c) => c.system === 'http://loinc.org')
        .map((c) => c.code);
    // Sources (stored LOINC pages of healthassure.in, LOINC 2.82): 98505-1 "Visual acuity far
    // uncorrected Right eye", 98501-0 "Visual acuity near uncorrected Left eye", 98499-7 "Visual
    // acuity uncorrected Right eye", 98498-9 "Visual acuity uncorrected Left eye" (the last also in
    // the Taiwan SFAA FHIR IG's example Observation visual-acuity-min).
    expect(loincOf('rightDistanceUncorrectedLogMar')).toEqual(['98505-1']);
    expect(loincOf('leftNearUncorrectedLogMar')).toEqual(['98501-0']);
    expect(loincOf('rightNearUncorrectedLogMar')).toEqual(['98499-7']);
    expect(loincOf('leftDistanceUncorrectedLogMar')).toEqual(['98498-9']);
    expect(loincOf('rightDistanceCorrectedLogMar')).toEqual([]);
    // SNOMED CT 251743004 "Near visual acuity": HL7 Eye Care IG visual acuity value set.
    expect(observation('rightNearUncorrectedLogMar').code.coding?.[0]).toEqual({
      system: 'http://snomed.info/sct',
      code: '251743004',
      display: 'Near visual acuity',
    });
    // Values round-trip exactly as stored, including a negative logMAR.
    expect(observation('leftDistanceUncorrectedLogMar').valueQuantity).toEqual({
      value: -0.08,
      unit: 'logMAR',
      system: 'http://unitsofmeasure.org',
      code: '1',
    });
    // SNOMED CT 362503005 "Entire left eye": HL7 CDA eye care guide, target sites.
    expect(observation('leftNearUncorrectedLogMar').bodySite?.coding?.[0]?.code).toBe('362503005');
  });

  it('writes only codes of named systems, each FHIR core code with its source', () => {
    const countersigned = record('visit', VISIT, {
      ...visit.fields,
      status: 'countersigned',
      countersignedBy: SUPERVISOR,
      countersignedAt: '2026-11-30T16:00:00.000Z',
    });
    const resources = visitResources({
      patient,
      visit: countersigned,
      visitRecords: [angles, cover],
      people,
    });
    for (const resource of resources) expect(fhirErrors(resource)).toEqual([]);
    const codings = new Map<string, Set<string>>();
    const walk = (value: unknown): void => {
      if (Array.isArray(value)) value.forEach(walk);
      else if (value && typeof value === 'object') {
        const o = value as Record<string, unknown>;
        if (typeof o.system === 'string' && typeof o.code === 'string') {
          const seen = codings.get(o.system) ?? new Set<string>();
          codings.set(o.system, seen.add(o.code));
        }
        Object.values(o).forEach(walk);
      }
    };
    walk(resources);
    // Every system the Bundle codes with is one docs/fhir.md names (the clinic number's system is
    // an identifier, not a coding, and is checked in fhir-codes.spec.ts).
    expect([...codings.keys()].sort()).toEqual(
      [
        'http://terminology.hl7.org/CodeSystem/data-absent-reason',
        'http://terminology.hl7.org/CodeSystem/observation-category',
        'http://terminology.hl7.org/CodeSystem/provenance-participant-type',
        'http://terminology.hl7.org/CodeSystem/v3-ActCode',
        'http://terminology.hl7.org/CodeSystem/v3-DataOperation',
        'http://unitsofmeasure.org',
        'https://fuselight.app/fhir/CodeSystem/orthoptics',
        'urn:iso-astm:E1762-95:2013',
      ].sort(),
    );
    // 1.2.840.10065.1.12.1.1 Author's Signature, 1.2.840.10065.1.12.1.5 Verification Signature:
    // FHIR's SignatureTypeCodes (hl7.org/fhir/r4b/codesystem-signature-type, and the R5-to-R4
    // lookup of hl7.org/fhir/uv/xver-r5.r4 for the R4 value set signature-type).
    expect([...codings.get('urn:iso-astm:E1762-95:2013')!].sort()).toEqual([
      '1.2.840.10065.1.12.1.1',
      '1.2.840.10065.1.12.1.5',
    ]);
    // The following from FHIR R4 core code systems [memory]: observation-category exam,
    // data-absent-reason not-performed, v3-ActCode AMB (ambulatory), provenance-participant-type
    // author and verifier, v3-DataOperation CREATE and UPDATE.
    expect([...codings.get('http://terminology.hl7.org/CodeSystem/observation-category')!]).toEqual(
      ['exam'],
    );
    expect([...codings.get('http://terminology.hl7.org/CodeSystem/data-absent-reason')!]).toEqual([
      'not-performed',
    ]);
    expect([...codings.get('http://terminology.hl7.org/CodeSystem/v3-ActCode')!]).toEqual(['AMB']);
    expect(
      [...codings.get('http://terminology.hl7.org/CodeSystem/provenance-participant-type')!].sort(),
    ).toEqual(['author', 'verifier']);
    expect(
      [...codings.get('http://terminology.hl7.org/CodeSystem/v3-DataOperation')!].sort(),
    ).toEqual(['CREATE', 'UPDATE']);
  });
});
