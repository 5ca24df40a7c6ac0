// Fixed ids for the schema tests (RFC 9562 version 7 layout).
export const SITE_ID = '0190c6a0-0000-7000-8000-00000000a001';
export const PATIENT_ID = '0190c6a0-0000-7000-8000-00000000b001';
export const VISIT_ID = '0190c6a0-0000-7000-8000-00000000c001';
export const CLINICIAN_ID = '0190c6a0-0000-7000-8000-00000000d001';
export const CHANGE_ID = '0190c6a0-0000-7000-8000-00000000e001';
export const RECORD_ID = '0190c6a0-0000-7000-8000-00000000f001';
export const placement = { siteId: SITE_ID, visitId: VISIT_ID, patientId: PATIENT_ID } as const;
