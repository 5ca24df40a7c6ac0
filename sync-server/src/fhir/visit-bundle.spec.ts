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
});
