// Who may see what, for every module to use (sync, conflicts, records, reports, audit):
//
//   canReadClinical(user)          orthoptist, outreach and supervisor; never admin
//   canWriteClinical(user)         the same set (admins provision, they do not chart)
//   sitesOf(user)                  the sites the session may touch clinically ([] for an admin);
//                                  on a tablet this is already the person's sites ∩ the tablet's
//   hasSiteAccess(user, siteId)    clinical access to one site, as a boolean (sync: `rejected`)
//   assertSiteAccess(user, siteId) the same, throwing 403 with a message (routes)
//   assertClinicalAccess(user)     403 for a role with no clinical access
//
// ScopeService wraps the same functions for constructor injection (exported by AuthModule).
import { ForbiddenException, Injectable } from '@nestjs/common';
import type { Role } from '@fuselight/shared';
import type { AuthUser } from './auth-user';

export const CLINICAL_ROLES: readonly Role[] = ['orthoptist', 'outreach', 'supervisor'];

type Caller = Pick<AuthUser, 'role' | 'siteIds'>;

export function canReadClinical(user: Caller): boolean {
  return CLINICAL_ROLES.includes(user.role);
}

export function canWriteClinical(user: Caller): boolean {
  return CLINICAL_ROLES.includes(user.role);
}

export function sitesOf(user: Caller): string[] {
  return canReadClinical(user) ? [...user.siteIds] : [];
}

export function hasSiteAccess(user: Caller, siteId: string): boolean {
  return canReadClinical(user) && user.siteIds.includes(siteId);
}

export function assertClinicalAccess(user: Caller): void {
  if (!canReadClinical(user)) {
    throw new ForbiddenException(`Clinical records are not open to the ${user.role} role.`);
  }
}

export function assertSiteAccess(user: Caller, siteId: string): void {
  assertClinicalAccess(user);
  if (!user.siteIds.includes(siteId)) {
    throw new ForbiddenException(
      `site ${siteId} is not one of the sites this session may use; ask an admin to add you to it.`,
    );
  }
}

@Injectable()
export class ScopeService {
  canReadClinical = canReadClinical;
  canWriteClinical = canWriteClinical;
  sitesOf = sitesOf;
  hasSiteAccess = hasSiteAccess;
  assertSiteAccess = assertSiteAccess;
  assertClinicalAccess = assertClinicalAccess;
}
