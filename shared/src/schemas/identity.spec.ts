import { describe, expect, it } from 'vitest';
import { loginRequestSchema, roleSchema, sessionUserSchema } from './identity.schema';
import { SITE_ID, CLINICIAN_ID } from './test-ids.fixture';

describe('identity wire schemas', () => {
  it('accepts a login with or without a device secret', () => {
    expect(loginRequestSchema.safeParse({ email: 'a@clinic.test', password: 'pw' }).success).toBe(
      true,
    );
    expect(
      loginRequestSchema.safeParse({ email: 'a@clinic.test', password: 'pw', deviceSecret: 's' })
        .success,
    ).toBe(true);
  });

  it('refuses a login without a password or with a malformed e-mail', () => {
    const noPassword = loginRequestSchema.safeParse({ email: 'a@clinic.test', password: '' });
    expect(noPassword.error?.issues[0]?.message).toBe('Enter your password');
    expect(loginRequestSchema.safeParse({ email: 'a-clinic', password: 'pw' }).success).toBe(false);
  });

  it('knows the four roles and no other', () => {
    expect(roleSchema.options).toEqual(['orthoptist', 'outreach', 'supervisor', 'admin']);
    expect(roleSchema.safeParse('student').success).toBe(false);
  });

  it('accepts a session user scoped to sites', () => {
    const user = {
      id: CLINICIAN_ID,
      name: 'Ngozi Eze',
      email: 'n.eze@clinic.test',
      role: 'supervisor',
      siteIds: [SITE_ID],
    };
    expect(sessionUserSchema.parse(user)).toEqual(user);
    expect(sessionUserSchema.safeParse({ ...user, siteIds: ['site-1'] }).success).toBe(false);
  });
});
