// Which areas each role sees. Admins run the Fleet, people and sites and see no clinical screen;
// supervisors also have the Review desk.
import type { Role } from '@fuselight/shared';

export type Area = 'clinical' | 'review' | 'admin' | 'self';

const AREAS: Record<Role, readonly Area[]> = {
  orthoptist: ['clinical', 'self'],
  outreach: ['clinical', 'self'],
  supervisor: ['clinical', 'review', 'self'],
  admin: ['admin', 'self'],
};

export function canSee(role: Role | undefined, area: Area): boolean {
  return role !== undefined && AREAS[role].includes(area);
}

export function homeFor(role: Role): string {
  return role === 'admin' ? '/fleet' : '/today';
}
