// The invented demo scenario: a fictional clinic with fictional people, patients and findings.
// Ids are fixed so that seeding twice changes nothing and a newcomer's tablet sees stable data.
export const DEMO_CLINIC_NAME = 'Harbourside Eye Clinic';

export const DEMO_SITES = {
  main: {
    id: '01935a00-0000-7000-8000-000000000001',
    name: 'Harbourside Eye Clinic — Quay Street',
    kind: 'clinic' as const,
    address: '14 Quay Street, Port Averly',
    timeZone: 'Europe/London',
  },
  outreach: {
    id: '01935a00-0000-7000-8000-000000000002',
    name: 'Harbourside Outreach — Fenwick Valley Schools',
    kind: 'outreach' as const,
    address: 'Fenwick Valley Primary, Mill Lane',
    timeZone: 'Europe/London',
  },
};

/** One invented person per role, plus a student whose visits wait for a countersignature. */
export const DEMO_PASSWORD = 'fuselight-demo';

export const DEMO_PEOPLE = {
  admin: {
    id: '01935a00-0000-7000-8000-000000000101',
    name: 'Idris Calloway',
    email: 'admin@demo.fuselight.test',
    role: 'admin' as const,
    siteIds: [] as string[],
    needsCountersign: false,
  },
  supervisor: {
    id: '01935a00-0000-7000-8000-000000000102',
    name: 'Hester Quaid',
    email: 'supervisor@demo.fuselight.test',
    role: 'supervisor' as const,
    siteIds: [DEMO_SITES.main.id, DEMO_SITES.outreach.id],
    needsCountersign: false,
  },
  orthoptist: {
    id: '01935a00-0000-7000-8000-000000000103',
    name: 'Tomasz Brennock',
    email: 'orthoptist@demo.fuselight.test',
    role: 'orthoptist' as const,
    siteIds: [DEMO_SITES.main.id],
    needsCountersign: false,
  },
  outreach: {
    id: '01935a00-0000-7000-8000-000000000104',
    name: 'Aoife Marchetti',
    email: 'outreach@demo.fuselight.test',
    role: 'outreach' as const,
    siteIds: [DEMO_SITES.outreach.id],
    needsCountersign: false,
  },
  student: {
    id: '01935a00-0000-7000-8000-000000000105',
    name: 'Priya Lindqvist',
    email: 'student@demo.fuselight.test',
    role: 'orthoptist' as const,
    siteIds: [DEMO_SITES.main.id],
    needsCountersign: true,
  },
};

/** The demo tablet of the Fleet, serving both sites; a fresh enrolment code is printed each start. */
export const DEMO_TABLET = {
  id: '01935a00-0000-7000-8000-000000000201',
  label: 'Demo tablet — Harbourside',
  siteIds: [DEMO_SITES.main.id, DEMO_SITES.outreach.id],
};
