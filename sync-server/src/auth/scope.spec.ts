import { ForbiddenException } from '@nestjs/common';
import { describe, expect, it } from 'vitest';
import { assertSiteAccess, canReadClinical, hasSiteAccess, sitesOf } from './scope';

const site = '01935a00-0000-7000-8000-000000000001';
const other = '01935a00-0000-7000-8000-000000000002';

describe('scopes', () => {
  it('gives clinical access to orthoptists, outreach clinicians and supervisors, never to admins', () => {
    expect(canReadClinical({ role: 'orthoptist', siteIds: [site] })).toBe(true);
    expect(canReadClinical({ role: 'outreach', siteIds: [site] })).toBe(true);
    expect(canReadClinical({ role: 'supervisor', siteIds: [site] })).toBe(true);
    expect(canReadClinical({ role: 'admin', siteIds: [site] })).toBe(false);
  });

  it('gives an admin no clinical sites even if the token lists some', () => {
    expect(sitesOf({ role: 'admin', siteIds: [site] })).toEqual([]);
    expect(hasSiteAccess({ role: 'admin', siteIds: [site] }, site)).toBe(false);
  });

  it('allows a clinician their own sites and refuses others with a 403 that names the site', () => {
    const clinician = { role: 'outreach' as const, siteIds: [site] };
    expect(() => assertSiteAccess(clinician, site)).not.toThrow();
    expect(() => assertSiteAccess(clinician, other)).toThrow(ForbiddenException);
    expect(() => assertSiteAccess(clinician, other)).toThrow(other);
  });
});
