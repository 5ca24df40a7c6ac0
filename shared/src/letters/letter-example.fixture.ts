// An invented example for letter tests and previews: a fictional clinic, patient, referrer and
// findings across three visits. Not real people or data.
import type { ClinicLetterInput } from './build-letter';
import type { VisitFindings } from './visit-findings';

const placement = {
  siteId: '01935a00-0000-7000-8000-000000000001',
  patientId: '01935a00-0000-7000-8000-0000000a0001',
};

function visit(
  id: string,
  date: string,
  angleDeg: number,
  subjectiveDeg: number,
  convergenceBreakDeg: number,
  npcBreakCm: number,
): VisitFindings {
  const visitId = `01935a00-0000-7000-8000-0000000b000${id}`;
  const at = { ...placement, visitId };
  return {
    visit: { id: visitId, date, reason: 'review of intermittent exotropia' },
    visualAcuity: {
      ...at,
      rightDistanceCorrectedNotation: '6/6',
      rightDistanceCorrectedLogMar: 0,
      leftDistanceCorrectedNotation: '6/7.5',
      leftDistanceCorrectedLogMar: 0.1,
    },
    coverTest: {
      ...at,
      nearFinding: 'phoria',
      nearHorizontalDirection: 'exo',
      nearControl: 'good',
      distanceFinding: 'tropia',
      distanceHorizontalDirection: 'exo',
      distanceEye: 'left',
      distanceControl: 'fair',
    },
    prismCoverTest: {
      ...at,
      nearHorizontalPd: 14,
      nearHorizontalBase: 'in',
      distanceHorizontalPd: 20,
      distanceHorizontalBase: 'in',
    },
    amblyoscopeAngles: {
      ...at,
      objectiveHorizontalDeg: angleDeg,
      subjectiveHorizontalDeg: subjectiveDeg,
      subjectiveVerticalPd: 2,
    },
    fusion: { ...at, result: 'present' },
    fusionalRanges: {
      ...at,
      convergenceBreakDeg: convergenceBreakDeg,
      convergenceRecoveryDeg: convergenceBreakDeg - 4,
      divergenceBreakDeg: -6,
      divergenceRecoveryDeg: -4,
    },
    nearPointConvergence: { ...at, breakCm: npcBreakCm, recoveryCm: npcBreakCm + 3 },
    stereoacuity: { ...at, valueArcsec: 120, testUsed: 'random-dot book', testDistanceCm: 40 },
  };
}

export const exampleVisits = {
  first: visit('1', '2026-05-12', -14, -13, 8, 14),
  second: visit('2', '2026-08-18', -11, -10, 12, 11),
  third: {
    ...visit('3', '2026-12-01', -8, -7.5, 18, 8),
    plan: {
      siteId: placement.siteId,
      patientId: placement.patientId,
      visitId: '01935a00-0000-7000-8000-0000000b0003',
      impression: 'Intermittent exotropia, better controlled than in August.',
      management: ['exercises', 'review'],
      exercisesPrescribed: [
        'Dot card convergence, 5 minutes twice a day',
        'Jump convergence with a pen, 10 times each evening',
      ],
      followUpWeeks: 8,
    },
  } satisfies VisitFindings,
};

export const exampleLetterInput: ClinicLetterInput = {
  clinic: { name: 'Harbourside Eye Clinic', address: '14 Quay Street, Port Averly' },
  patient: {
    givenName: 'Tamsin',
    familyName: 'Orrery',
    dateOfBirth: '2016-03-09',
    clinicNumber: 'HB-20417',
    referrer: { name: 'Dr Anselm Whitcombe', email: 'a.whitcombe@practice.example' },
  },
  letter: {
    id: '01935a00-0000-7000-8000-0000000c0001',
    kind: 'referrer',
    status: 'final',
    finalisedAt: '2026-12-01T15:20:00.000Z',
    finalisedBy: '01935a00-0000-7000-8000-000000000103',
  },
  current: exampleVisits.third,
  earlier: [exampleVisits.second, exampleVisits.first],
  clinician: { name: 'Wren Ashdown', role: 'Orthoptist' },
  issuedOn: '2026-12-01',
};
