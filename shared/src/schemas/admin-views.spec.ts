import { describe, expect, it } from 'vitest';
import {
  adminUserListSchema,
  adminUserSchema,
  fleetDeviceListSchema,
  fleetDeviceSchema,
  invitedPersonSchema,
} from './admin-views.schema';
import { CLINICIAN_ID, SITE_ID } from './test-ids.fixture';

const TABLET_ID = '0190c6a0-0000-7000-8000-00000000e0e1';

const person = {
  id: CLINICIAN_ID,
  name: 'Ngozi Eze',
  email: 'ngozi@clinic.test',
  role: 'orthoptist',
  siteIds: [SITE_ID],
  needsCountersign: false,
  active: true,
  mustChangePassword: true,
  createdAt: '2026-12-01T08:00:00.000Z',
  lastSignInAt: null,
};

const tablet = {
  id: TABLET_ID,
  label: 'Orthoptics room 2',
  state: 'active',
  siteIds: [SITE_ID],
  createdAt: '2026-12-01T08:00:00.000Z',
  enrolledAt: '2026-12-01T08:05:00.000Z',
  enrolmentExpiresAt: null,
  lastSeenAt: '2026-12-01T09:30:00.000Z',
  appVersion: '0.1.0',
  outboxSize: 4,
  retiredAt: null,
  revokedAt: null,
};

function firstProblem(result: { error?: { issues: { path: PropertyKey[]; message: string }[] } }) {
  const issue = result.error?.issues[0];
  return issue ? `${issue.path.map(String).join('.')}: ${issue.message}` : null;
}

describe('admin view schemas', () => {
  it('accepts a person and a list of people as the server answers them', () => {
    expect(adminUserSchema.parse(person)).toEqual(person);
    expect(adminUserListSchema.parse([person])).toEqual([person]);
    expect(
      invitedPersonSchema.parse({ user: person, initialPassword: 'tide-lamp-orchid-42' }).user,
    ).toEqual(person);
  });

  it('refuses a person without createdAt or with needsCountersign left out, naming the field', () => {
    const { createdAt: _createdAt, ...noCreatedAt } = person;
    expect(firstProblem(adminUserSchema.safeParse(noCreatedAt))).toMatch(/^createdAt: /);
    const { needsCountersign: _needs, ...noCountersign } = person;
    expect(firstProblem(adminUserSchema.safeParse(noCountersign))).toBe(
      'needsCountersign: must be true or false',
    );
  });

  it('refuses a role it does not know and a time that is not ISO 8601', () => {
    expect(firstProblem(adminUserSchema.safeParse({ ...person, role: 'student' }))).toMatch(
      /^role: role must be one of/,
    );
    expect(
      firstProblem(adminUserListSchema.safeParse([{ ...person, lastSignInAt: 'yesterday' }])),
    ).toBe('0.lastSignInAt: must be an ISO 8601 time in UTC');
  });

  it('accepts a tablet of the Fleet and refuses one without createdAt or with an odd state', () => {
    expect(fleetDeviceListSchema.parse([tablet])).toEqual([tablet]);
    const { createdAt: _createdAt, ...noCreatedAt } = tablet;
    expect(firstProblem(fleetDeviceSchema.safeParse(noCreatedAt))).toMatch(/^createdAt: /);
    expect(firstProblem(fleetDeviceSchema.safeParse({ ...tablet, state: 'lost' }))).toBe(
      'state: state must be one of: pending, active, retired, revoked',
    );
    expect(firstProblem(fleetDeviceSchema.safeParse({ ...tablet, outboxSize: -1 }))).toMatch(
      /^outboxSize: /,
    );
  });
});
