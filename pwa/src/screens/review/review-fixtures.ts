// A dispute as the desk receives it: two tablets disagreeing on an amblyoscope angle.
import type { DisputeDetail } from './review-api';

const SITE = '0190c6a0-0000-7000-8000-000000000001';
const RECORD = '0190c6a0-0000-7000-8000-0000000000a1';
const VISIT = '0190c6a0-0000-7000-8000-0000000000b1';
const PATIENT = '0190c6a0-0000-7000-8000-0000000000c1';

// 2026-12-01T09:30:00Z and 09:32:00Z as HLC wall times.
const stamp = (iso: string, device: string) =>
  `${String(Date.parse(iso)).padStart(15, '0')}-00000-${device}`;

export function angleDispute(overrides: Partial<DisputeDetail> = {}): DisputeDetail {
  return {
    id: 'c-1',
    collection: 'amblyoscopeAngles',
    recordId: RECORD,
    field: 'objectiveHorizontalDeg',
    status: 'open',
    openedAt: '2026-12-01T09:33:00.000Z',
    provisional: -8,
    candidates: [
      {
        value: 12,
        hlc: stamp('2026-12-01T09:30:00.000Z', 'dev-a'),
        version: 4,
        by: { id: 'u-a', name: 'Ada Quill' },
        device: { id: 'dev-a', label: 'Room 2 tablet' },
        enteredAt: '2026-12-01T09:30:00.000Z',
        provisional: false,
      },
      {
        value: -8,
        hlc: stamp('2026-12-01T09:32:00.000Z', 'dev-b'),
        version: 5,
        by: { id: 'u-b', name: 'Bram Osei' },
        device: { id: 'dev-b', label: 'Outreach tablet' },
        enteredAt: '2026-12-01T09:32:00.000Z',
        provisional: true,
      },
    ],
    siteId: SITE,
    siteName: 'Harbour Street Clinic',
    timeZone: 'Pacific/Auckland',
    patientId: PATIENT,
    patientName: 'Mira Tenby',
    visitId: VISIT,
    visitDate: '2026-12-01',
    signedVisit: false,
    record: {
      collection: 'amblyoscopeAngles',
      id: RECORD,
      version: 5,
      fields: {
        siteId: SITE,
        visitId: VISIT,
        patientId: PATIENT,
        objectiveHorizontalDeg: -8,
        subjectiveHorizontalDeg: 4,
        objectiveVerticalPd: 2,
      },
    },
    related: [],
    ...overrides,
  };
}
