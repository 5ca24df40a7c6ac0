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
