// The invented clinical scenario for the demo clinic: fictional patients, visits and Section
// records at the two demo sites. Pure data (no I/O): the seed step applies it through the sync
// storage as server-device changes so that a tablet's first sync pulls it. Ids are fixed so that
// seeding twice changes nothing. Every person and finding here is made up.
import type { CollectionName, SectionCollectionName } from '@fuselight/shared';
import { DEMO_PEOPLE, DEMO_SITES } from './demo-scenario';

export interface DemoRecord {
  collection: CollectionName;
  id: string;
  fields: Record<string, unknown>;
}

/** The demo people (people.seed) who saw the patients: one clinician per site, and a student. */
export const DEMO_CLINICIANS = {
  main: DEMO_PEOPLE.orthoptist.id,
  outreach: DEMO_PEOPLE.outreach.id,
  student: DEMO_PEOPLE.student.id,
} as const;

const COLLECTION_CODES: Record<CollectionName, number> = {
  patient: 1,
  visit: 2,
  amblyoscopeSetup: 3,
  simultaneousPerception: 4,
  amblyoscopeAngles: 5,
  suppressionScotoma: 6,
  fusion: 7,
  fusionalRanges: 8,
  grossStereopsis: 9,
  visualAcuity: 10,
  coverTest: 11,
  prismCoverTest: 12,
  nearPointConvergence: 13,
  accommodation: 14,
  stereoacuity: 15,
  motility: 16,
  plan: 17,
  attachment: 18,
  letter: 19,
  addendum: 20,
};

/** A fixed, valid version-7 UUID per collection and serial number. */
export function demoRecordId(collection: CollectionName, serial: number): string {
  const code = COLLECTION_CODES[collection].toString(16).padStart(4, '0');
  return `01935a10-${code}-7000-8000-${serial.toString(16).padStart(12, '0')}`;
}

type Sections = Partial<Record<SectionCollectionName, Record<string, unknown>>>;

interface DemoVisit {
  date: string;
  reason: string;
  sections: Sections;
  /** A junior's visit still waiting for the supervisor. */
  awaitingCountersign?: boolean;
  /** What was added after signing, each an `addendum` record by the visit's clinician. */
  addenda?: readonly { writtenAt: string; text: string }[];
}

interface DemoPatient {
  site: keyof typeof DEMO_SITES;
  givenName: string;
  familyName: string;
  dateOfBirth: string;
  clinicNumber: string;
  sex: 'female' | 'male' | 'other' | 'unknown';
  referrer?: { name: string; email?: string };
  notes?: string;
  visits: DemoVisit[];
}

// --- Section builders: small helpers so each story reads as findings, not as field names. ---

// The demo clinic's amblyoscope slides are invented subjects of its own: a pair of dissimilar
// pictures for simultaneous perception (a kite flown into a window frame), and a pair of similar
// pictures each with its own check mark for fusion (a lighthouse keeper's hut, with a lamp on one
// side and a bell on the other).
const SP_SLIDE = 'Kite and window frame';
const FUSION_SLIDE = 'Keeper’s hut with lamp and bell';

function angles(objectiveDeg: number, subjectiveDeg: number, verticalPd = 0): Sections {
  return {
    amblyoscopeSetup: {
      interpupillaryDistanceMm: 58,
      ownCorrectionWorn: true,
      fixingEye: 'right',
      lockedTube: 'right',
      dialsZeroed: true,
    },
    amblyoscopeAngles: {
      objectiveHorizontalDeg: objectiveDeg,
      subjectiveHorizontalDeg: subjectiveDeg,
      objectiveVerticalPd: verticalPd,
      subjectiveVerticalPd: verticalPd,
      slideUsed: SP_SLIDE,
    },
  };
}

function bsv(sp: 'present' | 'absent', fusion: 'present' | 'absent' | 'notTested'): Sections {
  return {
    simultaneousPerception: {
      result: sp,
      ...(sp === 'absent' ? { suppressingEye: 'left' } : {}),
      slideUsed: SP_SLIDE,
    },
    fusion: {
      result: fusion,
      ...(fusion === 'present' ? { rightMarkSeen: true, leftMarkSeen: true } : {}),
      slideUsed: FUSION_SLIDE,
    },
  };
}

/** Ranges as scale positions from the subjective angle (divergence first, then convergence). */
function ranges(start: number, divergenceAmp: number, convergenceAmp: number): Sections {
  return {
    fusionalRanges: {
      divergenceBreakDeg: start - divergenceAmp,
      divergenceRecoveryDeg: start - Math.max(0, divergenceAmp - 2),
      convergenceBreakDeg: start + convergenceAmp,
      convergenceRecoveryDeg: start + Math.max(0, convergenceAmp - 4),
      rightUpBreakPd: 2,
      rightUpRecoveryPd: 1,
      leftUpBreakPd: -2,
      leftUpRecoveryPd: -1,
      normsTable: 'Amblyoscope fusional amplitudes (Fuselight defaults)',
    },
  };
}

function acuity(
  right: [string, number],
  left: [string, number],
  chart = 'Crowded logMAR letters',
): Sections {
  return {
    visualAcuity: {
      rightDistanceCorrectedNotation: right[0],
      rightDistanceCorrectedLogMar: right[1],
      leftDistanceCorrectedNotation: left[0],
      leftDistanceCorrectedLogMar: left[1],
      chartUsed: chart,
    },
  };
}

function cover(
  finding: 'orthophoria' | 'phoria' | 'tropia',
  direction?: 'eso' | 'exo',
  eye?: 'right' | 'left' | 'alternating',
  control?: 'good' | 'fair' | 'poor',
): Sections {
  const at = (prefix: 'near' | 'distance') => ({
    [`${prefix}Finding`]: finding,
    ...(direction ? { [`${prefix}HorizontalDirection`]: direction } : {}),
    ...(eye ? { [`${prefix}Eye`]: eye } : {}),
    ...(control ? { [`${prefix}Control`]: control } : {}),
  });
  return { coverTest: { correctionWorn: true, ...at('near'), ...at('distance') } };
}

function npc(breakCm: number, recoveryCm: number): Sections {
  return { nearPointConvergence: { breakCm, recoveryCm, targetUsed: 'Small letter stick' } };
}

function accommodationD(amplitude: number): Sections {
  return {
    accommodation: {
      rightAmplitudeD: amplitude,
      leftAmplitudeD: amplitude,
      binocularAmplitudeD: amplitude + 1,
      method: 'Push-up with small print',
    },
  };
}

function stereo(arcsec: number | null, test = 'Random-dot book at 40 cm'): Sections {
  return {
    stereoacuity:
      arcsec === null
        ? { noneDetected: true, testUsed: test, testDistanceCm: 40 }
        : { valueArcsec: arcsec, testUsed: test, testDistanceCm: 40 },
  };
}

function plan(
  impression: string,
  management: string[],
  followUpWeeks: number,
  exercises?: string[],
): Sections {
  return {
    plan: {
      impression,
      management,
      followUpWeeks,
      ...(exercises ? { exercisesPrescribed: exercises } : {}),
    },
  };
}

const merge = (...parts: Sections[]): Sections => Object.assign({}, ...parts) as Sections;

// --- The patients and their stories. ---

const PATIENTS: DemoPatient[] = [
  {
    // The deviation that grows: an intermittent exotropia decompensating over two years.
    site: 'main',
    givenName: 'Maisie',
    familyName: 'Thornbury',
    dateOfBirth: '2018-03-14',
    clinicNumber: 'HEC-10231',
    sex: 'female',
    referrer: { name: 'Dr Anselm Rooke', email: 'a.rooke@averly-health.example' },
    notes: 'Parent reports one eye drifting out when tired.',
    visits: [
      {
        date: '2024-11-06',
        reason: 'New referral: eye drifts out when tired',
        sections: merge(
          angles(-6, -6),
          bsv('present', 'present'),
          ranges(-6, 6, 20),
          acuity(['6/7.5', 0.1], ['6/7.5', 0.1]),
          cover('phoria', 'exo', undefined, 'good'),
          npc(6, 8),
          stereo(60),
          plan('Well-controlled exophoria at distance.', ['review'], 26),
        ),
      },
      {
        date: '2025-05-14',
        reason: 'Review',
        sections: merge(
          angles(-10, -10),
          bsv('present', 'present'),
          ranges(-10, 5, 16),
          acuity(['6/6', 0], ['6/7.5', 0.1]),
          cover('phoria', 'exo', undefined, 'fair'),
          npc(8, 10),
          stereo(120),
          plan('Control at distance is slipping.', ['exercises', 'review'], 16, [
            'Pen push-ups, three times a day',
          ]),
        ),
      },
      {
        date: '2025-10-08',
        reason: 'Review',
        sections: merge(
          angles(-14, -14),
          bsv('present', 'present'),
          ranges(-14, 4, 12),
          acuity(['6/6', 0], ['6/6', 0]),
          cover('tropia', 'exo', 'left', 'poor'),
          npc(10, 13),
          stereo(240),
          plan(
            'Intermittent exotropia, now manifest more often at distance.',
            ['exercises', 'review'],
            12,
          ),
        ),
      },
      {
        date: '2026-06-17',
        reason: 'Review',
        sections: merge(
          angles(-18, -18),
          bsv('present', 'notTested'),
          ranges(-18, 3, 8),
          acuity(['6/6', 0], ['6/6', 0]),
          cover('tropia', 'exo', 'left', 'poor'),
          npc(12, 15),
          stereo(400),
          plan(
            'Deviation larger and control poor; discuss surgical opinion.',
            ['referral', 'review'],
            8,
          ),
        ),
        addenda: [
          {
            writtenAt: '2026-06-18T09:20:00.000Z',
            text: 'Parent phoned: Maisie had a cold on the day and was very tired. Keep the referral; recheck near control at the next visit before any listing.',
          },
        ],
      },
    ],
  },
  {
    // Abnormal correspondence: a long-standing esotropia with harmonious ARC.
    site: 'main',
    givenName: 'Oren',
    familyName: 'Castellane',
    dateOfBirth: '1988-07-02',
    clinicNumber: 'HEC-10477',
    sex: 'male',
    referrer: { name: 'Dr Wilhelmina Ashdown' },
    notes: 'Childhood squint; asks about a cosmetic procedure.',
    visits: [
      {
        date: '2025-02-19',
        reason: 'Assessment before a surgical opinion',
        sections: merge(
          angles(14, 0),
          bsv('present', 'absent'),
          acuity(['6/6', 0], ['6/12', 0.3]),
          cover('tropia', 'eso', 'left'),
          npc(5, 7),
          accommodationD(6),
          stereo(null, 'Random-dot book at 40 cm'),
          plan(
            'Left esotropia with a subjective angle of zero at the amblyoscope: consistent with harmonious ARC. Post-operative diplopia risk to discuss.',
            ['referral'],
            12,
          ),
        ),
      },
      {
        date: '2025-06-04',
        reason: 'Repeat amblyoscope before surgery',
        sections: merge(
          angles(15, 1),
          bsv('present', 'absent'),
          acuity(['6/6', 0], ['6/12', 0.3]),
          cover('tropia', 'eso', 'left'),
          stereo(null),
          plan(
            'Findings unchanged: harmonious ARC, angle of anomaly about the objective angle.',
            ['review'],
            26,
          ),
        ),
      },
      {
        date: '2026-01-21',
        reason: 'Post-operative review',
        sections: merge(
          angles(4, 0),
          bsv('present', 'present'),
          ranges(0, 2, 10),
          acuity(['6/6', 0], ['6/12', 0.3]),
          cover('tropia', 'eso', 'left'),
          stereo(null),
          plan('Small residual esotropia; no diplopia reported.', ['review'], 52),
        ),
      },
    ],
  },
  {
    // Accommodative esotropia settling with glasses.
    site: 'main',
    givenName: 'Ishani',
    familyName: 'Venkataraghavan',
    dateOfBirth: '2020-11-20',
    clinicNumber: 'HEC-10512',
    sex: 'female',
    referrer: { name: 'Harbourside Health Visitors' },
    visits: [
      {
        date: '2024-09-11',
        reason: 'Eye turns in, worse when looking at books',
        sections: merge(
          angles(16, 15),
          bsv('present', 'absent'),
          acuity(['0.4 logMAR', 0.4], ['0.5 logMAR', 0.5], 'Picture optotypes'),
          cover('tropia', 'eso', 'alternating'),
          plan(
            'Esotropia, likely accommodative; glasses prescribed by the optometrist.',
            ['glasses', 'review'],
            8,
          ),
        ),
      },
      {
        date: '2025-01-15',
        reason: 'Review in glasses',
        sections: merge(
          angles(8, 7),
          bsv('present', 'present'),
          ranges(7, 3, 14),
          acuity(['0.3 logMAR', 0.3], ['0.3 logMAR', 0.3], 'Picture optotypes'),
          cover('tropia', 'eso', 'alternating', 'fair'),
          plan('Much straighter in glasses.', ['glasses', 'review'], 12),
        ),
      },
      {
        date: '2025-07-09',
        reason: 'Review in glasses',
        sections: merge(
          angles(3, 3),
          bsv('present', 'present'),
          ranges(3, 4, 18),
          acuity(['0.2 logMAR', 0.2], ['0.2 logMAR', 0.2], 'Picture optotypes'),
          cover('phoria', 'eso', undefined, 'good'),
          stereo(200),
          plan(
            'Controlled esophoria in glasses; fusion and stereopsis present.',
            ['glasses', 'review'],
            26,
          ),
        ),
        awaitingCountersign: true,
      },
    ],
  },
  {
    // Convergence insufficiency improving with exercises.
    site: 'main',
    givenName: 'Tobias',
    familyName: 'Pellow-Ainsley',
    dateOfBirth: '1969-01-09',
    clinicNumber: 'HEC-10590',
    sex: 'male',
    notes: 'Works long hours at a screen; headaches after reading.',
    visits: [
      {
        date: '2025-03-05',
        reason: 'Headaches and blur when reading',
        sections: merge(
          angles(-4, -4),
          bsv('present', 'present'),
          ranges(-4, 5, 8),
          acuity(['6/6', 0], ['6/6', 0], 'Distance letter chart'),
          cover('phoria', 'exo', undefined, 'fair'),
          npc(12, 16),
          accommodationD(2),
          stereo(60),
          plan('Convergence insufficiency.', ['exercises', 'review'], 6, [
            'Jump convergence with a dot card',
            'Pen push-ups',
          ]),
        ),
      },
      {
        date: '2025-04-16',
        reason: 'Exercises review',
        sections: merge(
          angles(-4, -4),
          bsv('present', 'present'),
          ranges(-4, 5, 14),
          npc(8, 11),
          plan('Improving with exercises.', ['exercises', 'review'], 6),
        ),
      },
      {
        date: '2025-06-11',
        reason: 'Exercises review',
        sections: merge(
          angles(-3, -3),
          bsv('present', 'present'),
          ranges(-3, 5, 22),
          npc(5, 7),
          stereo(40),
          plan('Convergence now within the adult cut-offs; symptoms gone.', ['discharge'], 0),
        ),
      },
    ],
  },
  {
    // Amblyopia improving with occlusion.
    site: 'main',
    givenName: 'Elodie',
    familyName: 'Brackenridge',
    dateOfBirth: '2019-06-30',
    clinicNumber: 'HEC-10633',
    sex: 'female',
    referrer: { name: 'Port Averly school nurse team' },
    visits: [
      {
        date: '2025-01-22',
        reason: 'Failed vision screening, left eye',
        sections: merge(
          angles(2, 2),
          bsv('present', 'present'),
          acuity(['0.1 logMAR', 0.1], ['0.7 logMAR', 0.7]),
          cover('orthophoria'),
          stereo(800),
          plan('Left anisometropic amblyopia.', ['glasses', 'occlusion', 'review'], 8),
        ),
      },
      {
        date: '2025-04-02',
        reason: 'Occlusion review',
        sections: merge(
          acuity(['0.1 logMAR', 0.1], ['0.4 logMAR', 0.4]),
          cover('orthophoria'),
          stereo(400),
          plan('Left acuity improving with patching two hours a day.', ['occlusion', 'review'], 8),
        ),
      },
      {
        date: '2025-07-02',
        reason: 'Occlusion review',
        sections: merge(
          acuity(['0.0 logMAR', 0], ['0.2 logMAR', 0.2]),
          cover('orthophoria'),
          stereo(120),
          plan('Good response; taper patching.', ['occlusion', 'review'], 12),
        ),
      },
      {
        date: '2025-11-19',
        reason: 'Review after occlusion',
        sections: merge(
          acuity(['0.0 logMAR', 0], ['0.1 logMAR', 0.1]),
          cover('orthophoria'),
          stereo(60),
          plan('Acuity maintained off patching.', ['review'], 26),
        ),
      },
    ],
  },
  {
    site: 'main',
    givenName: 'Kwame',
    familyName: 'Asante-Hollis',
    dateOfBirth: '1995-04-17',
    clinicNumber: 'HEC-10702',
    sex: 'male',
    visits: [
      {
        date: '2025-08-20',
        reason: 'Intermittent doubling when tired',
        sections: merge(
          angles(-8, -8),
          bsv('present', 'present'),
          ranges(-8, 4, 9),
          acuity(['6/6', 0], ['6/6', 0], 'Distance letter chart'),
          cover('phoria', 'exo', undefined, 'poor'),
          npc(9, 12),
          plan('Decompensating exophoria.', ['exercises', 'review'], 8, ['Dot card, twice a day']),
        ),
      },
      {
        date: '2025-10-15',
        reason: 'Review',
        sections: merge(
          angles(-8, -8),
          bsv('present', 'present'),
          ranges(-8, 5, 18),
          cover('phoria', 'exo', undefined, 'good'),
          npc(6, 8),
          plan('Control regained.', ['review'], 26),
        ),
      },
    ],
  },
  {
    site: 'main',
    givenName: 'Nadia',
    familyName: 'Okonkwo-Pryce',
    dateOfBirth: '2012-09-05',
    clinicNumber: 'HEC-10745',
    sex: 'female',
    visits: [
      {
        date: '2025-09-03',
        reason: 'Reading fatigue',
        sections: merge(
          angles(0, 0),
          bsv('present', 'present'),
          ranges(0, 5, 26),
          acuity(['6/6', 0], ['6/6', 0]),
          cover('orthophoria'),
          npc(4, 6),
          accommodationD(13),
          stereo(40),
          plan('Normal binocular findings.', ['discharge'], 0),
        ),
      },
      {
        date: '2026-03-04',
        reason: 'Returned with the same symptoms',
        sections: merge(
          angles(0, 0),
          bsv('present', 'present'),
          ranges(0, 5, 25),
          npc(4, 6),
          accommodationD(8),
          plan('Accommodation low for age; optometry review.', ['referral'], 12),
        ),
      },
    ],
  },
  {
    // A vertical deviation recovering after a fourth nerve palsy.
    site: 'main',
    givenName: 'Fergus',
    familyName: 'Holmgrave',
    dateOfBirth: '1954-12-22',
    clinicNumber: 'HEC-10788',
    sex: 'male',
    notes: 'Vertical double vision after a fall.',
    visits: [
      {
        date: '2025-05-07',
        reason: 'Sudden vertical double vision',
        sections: merge(
          angles(0, 0, 8),
          bsv('present', 'absent'),
          acuity(['6/9', 0.2], ['6/9', 0.2], 'Distance letter chart'),
          cover('tropia', undefined, 'right'),
          {
            motility: { rightDownLeft: -2, leftUpRight: 1, headPosture: 'Head tilted to the left' },
          },
          plan('Right hypertropia, likely fourth nerve palsy.', ['prisms', 'review'], 6),
        ),
      },
      {
        date: '2025-07-02',
        reason: 'Review',
        sections: merge(
          angles(0, 0, 5),
          bsv('present', 'present'),
          { motility: { rightDownLeft: -1, headPosture: 'Slight left tilt' } },
          plan('Recovering.', ['prisms', 'review'], 8),
        ),
      },
      {
        date: '2025-09-24',
        reason: 'Review',
        sections: merge(
          angles(0, 0, 2),
          bsv('present', 'present'),
          ranges(0, 4, 16),
          { motility: { rightDownLeft: 0, headPosture: 'None' } },
          plan('Nearly resolved; prism weaned.', ['review'], 26),
        ),
      },
    ],
  },
  // Outreach: the Fenwick Valley school visits.
  {
    site: 'outreach',
    givenName: 'Isla',
    familyName: 'Penhaligon',
    dateOfBirth: '2017-02-11',
    clinicNumber: 'FVS-2041',
    sex: 'female',
    visits: [
      {
        date: '2025-03-12',
        reason: 'School screening referral',
        sections: merge(
          angles(8, 4),
          bsv('present', 'present'),
          acuity(['0.0 logMAR', 0], ['0.3 logMAR', 0.3]),
          cover('tropia', 'eso', 'left'),
          stereo(400),
          plan(
            'Small left esotropia; subjective angle between zero and the objective angle.',
            ['glasses', 'review'],
            12,
          ),
        ),
      },
      {
        date: '2025-06-18',
        reason: 'Review',
        sections: merge(
          angles(7, 4),
          bsv('present', 'present'),
          acuity(['0.0 logMAR', 0], ['0.2 logMAR', 0.2]),
          stereo(400),
          plan('Stable.', ['review'], 26),
        ),
      },
    ],
  },
  {
    site: 'outreach',
    givenName: 'Rafferty',
    familyName: 'Doull',
    dateOfBirth: '2016-08-03',
    clinicNumber: 'FVS-2057',
    sex: 'male',
    visits: [
      {
        date: '2025-03-12',
        reason: 'School screening referral',
        sections: merge(
          angles(0, 0),
          bsv('present', 'present'),
          ranges(0, 5, 24),
          acuity(['0.1 logMAR', 0.1], ['0.1 logMAR', 0.1]),
          cover('orthophoria'),
          npc(5, 7),
          stereo(60),
          plan('Normal findings.', ['review'], 52),
        ),
      },
      {
        date: '2026-03-11',
        reason: 'Annual review',
        sections: merge(
          angles(0, 0),
          bsv('present', 'present'),
          acuity(['0.0 logMAR', 0], ['0.0 logMAR', 0]),
          stereo(40),
          plan('Normal; discharge.', ['discharge'], 0),
        ),
      },
    ],
  },
  {
    site: 'outreach',
    givenName: 'Yusra',
    familyName: 'Halloran',
    dateOfBirth: '2014-05-27',
    clinicNumber: 'FVS-2063',
    sex: 'female',
    visits: [
      {
        date: '2025-03-13',
        reason: 'Headaches in class',
        sections: merge(
          angles(-2, -2),
          bsv('present', 'present'),
          ranges(-2, 4, 10),
          cover('phoria', 'exo', undefined, 'fair'),
          npc(11, 14),
          accommodationD(9),
          plan('Convergence weakness.', ['exercises', 'review'], 8, ['Pen push-ups']),
        ),
      },
      {
        date: '2025-05-15',
        reason: 'Exercises review',
        sections: merge(
          angles(-2, -2),
          bsv('present', 'present'),
          ranges(-2, 5, 20),
          npc(6, 8),
          accommodationD(12),
          plan('Improving.', ['exercises', 'review'], 12),
        ),
      },
      {
        date: '2025-09-18',
        reason: 'Exercises review',
        sections: merge(
          angles(-1, -1),
          bsv('present', 'present'),
          ranges(-1, 5, 26),
          npc(4, 6),
          accommodationD(14),
          plan('Resolved.', ['discharge'], 0),
        ),
      },
    ],
  },
  {
    site: 'outreach',
    givenName: 'Bram',
    familyName: 'Ellery-Voss',
    dateOfBirth: '2018-10-19',
    clinicNumber: 'FVS-2078',
    sex: 'male',
    visits: [
      {
        date: '2025-06-19',
        reason: 'Teacher noticed head tilt',
        sections: merge(
          angles(0, 0, -4),
          bsv('present', 'present'),
          cover('phoria', undefined, undefined, 'good'),
          { motility: { leftDownRight: -1, headPosture: 'Head tilted to the right' } },
          plan('Small L/R phoria, well controlled.', ['review'], 26),
        ),
      },
      {
        date: '2025-12-11',
        reason: 'Review',
        sections: merge(
          angles(0, 0, -3),
          bsv('present', 'present'),
          ranges(0, 5, 22),
          stereo(60),
          plan('Stable.', ['review'], 52),
        ),
      },
    ],
  },
  {
    site: 'outreach',
    givenName: 'Saoirse',
    familyName: 'Quennell',
    dateOfBirth: '2013-01-08',
    clinicNumber: 'FVS-2082',
    sex: 'female',
    visits: [
      {
        date: '2025-03-13',
        reason: 'Poor vision in the right eye at screening',
        sections: merge(
          angles(0, 0),
          bsv('absent', 'absent'),
          acuity(['0.6 logMAR', 0.6], ['0.0 logMAR', 0]),
          cover('orthophoria'),
          stereo(null),
          plan('Right amblyopia with suppression.', ['glasses', 'occlusion', 'review'], 8),
        ),
      },
      {
        date: '2025-05-15',
        reason: 'Occlusion review',
        sections: merge(
          angles(0, 0),
          bsv('present', 'present'),
          acuity(['0.4 logMAR', 0.4], ['0.0 logMAR', 0]),
          stereo(800),
          plan('Improving.', ['occlusion', 'review'], 8),
        ),
      },
      {
        date: '2025-09-18',
        reason: 'Occlusion review',
        sections: merge(
          angles(0, 0),
          bsv('present', 'present'),
          acuity(['0.2 logMAR', 0.2], ['0.0 logMAR', 0]),
          stereo(200),
          plan('Good response.', ['occlusion', 'review'], 12),
        ),
      },
    ],
  },
  {
    site: 'outreach',
    givenName: 'Milo',
    familyName: 'Achterberg',
    dateOfBirth: '2017-12-01',
    clinicNumber: 'FVS-2094',
    sex: 'male',
    visits: [
      {
        date: '2025-06-19',
        reason: 'School screening referral',
        sections: merge(
          angles(-5, -5),
          bsv('present', 'present'),
          ranges(-5, 5, 18),
          acuity(['0.1 logMAR', 0.1], ['0.1 logMAR', 0.1]),
          cover('phoria', 'exo', undefined, 'good'),
          npc(6, 8),
          stereo(100),
          plan('Controlled exophoria.', ['review'], 26),
        ),
      },
      {
        date: '2025-12-11',
        reason: 'Review',
        sections: merge(
          angles(-6, -6),
          bsv('present', 'present'),
          ranges(-6, 5, 17),
          cover('phoria', 'exo', undefined, 'good'),
          npc(6, 8),
          plan('Unchanged.', ['review'], 52),
        ),
      },
    ],
  },
];

/** Signed at 17:00 UTC on the visit's day. */
function signedAtOf(date: string): string {
  return `${date}T17:00:00.000Z`;
}

export interface ClinicalDemoOptions {
  /** The seeding day (YYYY-MM-DD): today's bookings are draft visits on this day. */
  today: string;
}

/** Patients booked for today (by index into the patient list), with who sees them. */
const TODAY_BOOKINGS: readonly { patient: number; reason: string }[] = [
  { patient: 0, reason: 'Review: deviation and control' },
  { patient: 1, reason: 'Amblyoscope before surgery listing' },
  { patient: 4, reason: 'Acuity check' },
  { patient: 8, reason: 'School follow-up' },
  { patient: 10, reason: 'Exercises review' },
];

/**
 * Every record of the scenario, patients first, then each visit followed by its Sections and
 * its Addenda.
 */
export function clinicalDemoRecords({ today }: ClinicalDemoOptions): DemoRecord[] {
  const records: DemoRecord[] = [];
  let visitSerial = 0;
  let sectionSerial = 0;
  let addendumSerial = 0;
  PATIENTS.forEach((patient, index) => {
    const patientId = demoRecordId('patient', index + 1);
    const siteId = DEMO_SITES[patient.site].id;
    const siteClinician = DEMO_CLINICIANS[patient.site];
    records.push({
      collection: 'patient',
      id: patientId,
      fields: {
        siteId,
        givenName: patient.givenName,
        familyName: patient.familyName,
        dateOfBirth: patient.dateOfBirth,
        clinicNumber: patient.clinicNumber,
        sex: patient.sex,
        ...(patient.referrer ? { referrer: patient.referrer } : {}),
        ...(patient.notes ? { notes: patient.notes } : {}),
      },
    });
    for (const visit of patient.visits) {
      visitSerial += 1;
      const visitId = demoRecordId('visit', visitSerial);
      // A student's visit waits for the supervisor's countersignature.
      const clinicianId = visit.awaitingCountersign ? DEMO_CLINICIANS.student : siteClinician;
      records.push({
        collection: 'visit',
        id: visitId,
        fields: {
          siteId,
          patientId,
          date: visit.date,
          clinicianId,
          reason: visit.reason,
          status: 'signed',
          needsCountersign: visit.awaitingCountersign ?? false,
          signedBy: clinicianId,
          signedAt: signedAtOf(visit.date),
        },
      });
      for (const [collection, fields] of Object.entries(visit.sections)) {
        sectionSerial += 1;
        records.push({
          collection: collection as SectionCollectionName,
          id: demoRecordId(collection as SectionCollectionName, sectionSerial),
          fields: { siteId, visitId, patientId, ...fields },
        });
      }
      for (const addendum of visit.addenda ?? []) {
        addendumSerial += 1;
        records.push({
          collection: 'addendum',
          id: demoRecordId('addendum', addendumSerial),
          fields: { siteId, visitId, patientId, authorId: clinicianId, ...addendum },
        });
      }
    }
  });
  // Today's bookings: draft visits with nothing charted yet. Their ids depend on the day so a
  // seed on another day books afresh rather than moving an earlier booking.
  const dayNumber = Number(today.replaceAll('-', ''));
  TODAY_BOOKINGS.forEach((booking, i) => {
    const patient = PATIENTS[booking.patient];
    if (!patient) return;
    records.push({
      collection: 'visit',
      id: demoRecordId('visit', dayNumber * 100 + i),
      fields: {
        siteId: DEMO_SITES[patient.site].id,
        patientId: demoRecordId('patient', booking.patient + 1),
        date: today,
        clinicianId: DEMO_CLINICIANS[patient.site],
        reason: booking.reason,
        status: 'draft',
        needsCountersign: false,
      },
    });
  });
  return records;
}

/** The scenario's story patients, for tests and the seed's printout. */
export const DEMO_STORY_PATIENTS = {
  changingDeviation: demoRecordId('patient', 1),
  harmoniousArc: demoRecordId('patient', 2),
} as const;

export const DEMO_PATIENT_COUNT = PATIENTS.length;
