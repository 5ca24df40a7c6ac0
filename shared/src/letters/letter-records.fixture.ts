// The invented example letter (letter-example.fixture.ts) as the synced records both ends hold,
// for tests that build the same letter on the tablet and on the server. Besides each visit's own
// Section records it holds records that must not feed the letter: rival angle records of the
// current visit with a lower and a higher id than its derived Section id, a rival of an earlier
// visit's Section with a higher id, and an earlier app's Addendum kept as a plan record with the
// lowest id. Not real people or data.
import { sectionRecordId } from '../schemas/section-records';
import type { SectionCollectionName } from '../schemas/collection-names.schema';
import type { LetterRecords, LetterSourceRecord } from './letter-inputs';
import { exampleLetterInput, exampleVisits } from './letter-example.fixture';
import type { VisitFindings } from './visit-findings';

export interface LetterRecordsFixtureIds {
  siteId: string;
  patientId: string;
  /** The three visits, oldest first; the letter is on the last. */
  visitIds: readonly [string, string, string];
  letterId: string;
  /** Who finalised the letter and charted the visits. */
  clinicianId: string;
  /** A fresh UUID (version 7) for each record that has no derived id. */
  newId: () => string;
}

/** A record to create on a tablet or push to the server: plain JSON fields, no nulls. */
export interface FixtureRecord extends LetterSourceRecord {
  collection: string;
  fields: Record<string, string | number | boolean | string[] | object>;
}

export interface LetterRecordsFixture {
  /** Every record, in an order a tablet may create or push them. */
  all: FixtureRecord[];
  /** The same records as the letter rule reads them. */
  records: LetterRecords;
}

function plain(value: object | null | undefined): Record<string, never> {
  return Object.fromEntries(
    Object.entries(value ?? {}).filter(([, v]) => v !== undefined && v !== null),
  ) as Record<string, never>;
}

/** With the first eight hex digits replaced, so it sorts before or after every other id. */
function lowest(id: string): string {
  return `00000000${id.slice(8)}`;
}
function highest(id: string): string {
  return `ffffffff${id.slice(8)}`;
}

export function exampleLetterRecords(ids: LetterRecordsFixtureIds): LetterRecordsFixture {
  const { siteId, patientId } = ids;
  const p = exampleLetterInput.patient;
  const patient: FixtureRecord = {
    id: patientId,
    collection: 'patient',
    fields: {
      siteId,
      givenName: p.givenName,
      familyName: p.familyName,
      dateOfBirth: p.dateOfBirth,
      clinicNumber: p.clinicNumber,
      referrer: plain(p.referrer),
    },
  };
  const visits: FixtureRecord[] = [];
  const sections: FixtureRecord[] = [];
  const examples: VisitFindings[] = [
    exampleVisits.first,
    exampleVisits.second,
    exampleVisits.third,
  ];
  examples.forEach((findings, index) => {
    const visitId = ids.visitIds[index]!;
    const current = index === examples.length - 1;
    visits.push({
      id: visitId,
      collection: 'visit',
      fields: {
        siteId,
        patientId,
        date: findings.visit.date,
        clinicianId: ids.clinicianId,
        status: 'signed',
        ...(findings.visit.reason ? { reason: findings.visit.reason } : {}),
        signedBy: ids.clinicianId,
        signedAt: `${findings.visit.date}T12:00:00.000Z`,
      },
    });
    const at = { siteId, patientId, visitId };
    for (const [collection, section] of Object.entries(findings)) {
      if (collection === 'visit' || !section) continue;
      // The letter's visit has derived Section ids; the earlier visits' records are older ones
      // with random ids, as tablets made them before ids were derived.
      sections.push({
        id: current ? sectionRecordId(visitId, collection as SectionCollectionName) : ids.newId(),
        collection,
        fields: { ...plain(section), ...at },
      });
    }
    if (current) {
      const own = sectionRecordId(visitId, 'amblyoscopeAngles');
      sections.push(
        {
          id: lowest(ids.newId()),
          collection: 'amblyoscopeAngles',
          fields: { ...at, objectiveHorizontalDeg: -30, subjectiveHorizontalDeg: -29 },
        },
        {
          id: highest(own),
          collection: 'amblyoscopeAngles',
          fields: { ...at, objectiveHorizontalDeg: -25, subjectiveHorizontalDeg: -24 },
        },
        {
          id: lowest(ids.newId()),
          collection: 'plan',
          fields: {
            ...at,
            impression: `Addendum ·\t2026-12-02T09:00:00.000Z\t${ids.clinicianId}\tWren Ashdown\nThe family report reading is more comfortable.`,
          },
        },
      );
    } else if (index === 1) {
      sections.push({
        id: highest(ids.newId()),
        collection: 'amblyoscopeAngles',
        fields: { ...at, objectiveHorizontalDeg: -40, subjectiveHorizontalDeg: -39 },
      });
    }
  });
  const letter: FixtureRecord = {
    id: ids.letterId,
    collection: 'letter',
    fields: {
      siteId,
      patientId,
      visitId: ids.visitIds[2],
      kind: 'referrer',
      status: 'final',
      finalisedAt: exampleLetterInput.letter.finalisedAt!,
      finalisedBy: ids.clinicianId,
    },
  };
  return {
    all: [patient, ...visits, ...sections, letter],
    records: {
      letter,
      visit: visits[2]!,
      patient,
      patientVisits: visits,
      sections,
    },
  };
}
