// Valid records for the data-layer and sync tests (ids in the UUID v7 layout).
export const SITE_ID = '0190c6a0-0000-7000-8000-00000000a001';
export const OTHER_SITE_ID = '0190c6a0-0000-7000-8000-00000000a002';
export const CLINICIAN_ID = '0190c6a0-0000-7000-8000-00000000d001';
export const OTHER_CLINICIAN_ID = '0190c6a0-0000-7000-8000-00000000d002';
export const DEVICE_ID = '0190c6a0-0000-7000-8000-0000000de001';

export function patientFields(overrides: Record<string, unknown> = {}) {
  return {
    siteId: SITE_ID,
    givenName: 'Amara',
    familyName: 'Okafor',
    dateOfBirth: '2016-04-09',
    clinicNumber: 'FL-000123',
    ...overrides,
  };
}

export function visitFields(patientId: string, overrides: Record<string, unknown> = {}) {
  return {
    siteId: SITE_ID,
    patientId,
    date: '2026-12-01',
    clinicianId: CLINICIAN_ID,
    status: 'draft' as const,
    ...overrides,
  };
}

export function planFields(
  patientId: string,
  visitId: string,
  overrides: Record<string, unknown> = {},
) {
  return { siteId: SITE_ID, patientId, visitId, impression: null, ...overrides };
}
