// Signed visits pushed by a tablet for the FHIR specs, and the local fake FHIR receiver.
import { v7 as uuidv7 } from 'uuid';
import type { JsonValue } from '@fuselight/shared';
import type { LetterTablet } from '../../letters/testing/letters-test-kit';

export {
  startFakeFhirReceiver,
  validationErrors,
  type FakeFhirReceiver,
} from '../../../../scripts/fake-fhir-receiver.mjs';

export interface PushedVisit {
  patientId: string;
  visitId: string;
  acuityId: string;
}

/** A patient and one signed visit with acuity, NPC and an amblyoscope angle, pushed as a tablet does. */
export async function pushSignedVisit(
  tablet: LetterTablet,
  siteId: string,
  options: { clinicNumber?: string; date?: string } = {},
): Promise<PushedVisit> {
  const patientId = uuidv7();
  const visitId = uuidv7();
  const acuityId = uuidv7();
  const date = options.date ?? '2026-11-30';
  const place = { siteId, patientId, visitId };
  const records: { collection: string; recordId: string; fields: Record<string, JsonValue> }[] = [
    {
      collection: 'patient',
      recordId: patientId,
      fields: {
        siteId,
        givenName: 'Orla',
        familyName: 'Pennick',
        dateOfBirth: '2017-03-09',
        clinicNumber: options.clinicNumber ?? `HX-${patientId.slice(-6)}`,
        sex: 'female',
      },
    },
    {
      collection: 'visit',
      recordId: visitId,
      fields: {
        siteId,
        patientId,
        date,
        clinicianId: tablet.person.id,
        status: 'signed',
        signedBy: tablet.person.id,
        signedAt: `${date}T10:42:00.000Z`,
      },
    },
    {
      collection: 'visualAcuity',
      recordId: acuityId,
      fields: {
        ...place,
        rightDistanceCorrectedLogMar: 0.1,
        rightDistanceCorrectedNotation: '6/7.5',
        leftDistanceCorrectedLogMar: 0.3,
      },
    },
    {
      collection: 'nearPointConvergence',
      recordId: uuidv7(),
      fields: { ...place, breakCm: 8, recoveryCm: 11 },
    },
    {
      collection: 'amblyoscopeAngles',
      recordId: uuidv7(),
      fields: { ...place, objectiveHorizontalDeg: -6, subjectiveHorizontalDeg: -6 },
    },
  ];
  await tablet.pushAll(records);
  return { patientId, visitId, acuityId };
}
