// Who may do what to a visit, and how an Addendum is stored. The shared visit schema has no
// addendum collection yet, so an Addendum is a separate `plan` record of the visit whose
// impression starts with a fixed marker line naming its author and time; the signed Sections
// are never edited. (When the schemas gain an addendum collection, only this file changes.)
import type { SessionUser } from '@fuselight/shared';
import type { LocalRecord } from '../records-repository';

export const ADDENDUM_PREFIX = 'Addendum ·';

export interface Addendum {
  id: string;
  authorId: string;
  authorName: string;
  writtenAt: string;
  text: string;
  /** Field names disputed between devices. */
  conflicts: string[];
}

type Visit = LocalRecord<'visit'>;

/** true when allowed, otherwise the reason in words. */
export type RuleAnswer = true | string;

export function canEditSections(visit: Visit): boolean {
  return visit.fields.status === 'draft';
}

export function canSign(visit: Visit, user: SessionUser | null): RuleAnswer {
  if (!user) return 'Sign in to sign this visit.';
  if (visit.fields.status !== 'draft') return 'This visit is already signed.';
  if (user.role === 'admin') return 'An admin account cannot sign clinical visits.';
  return true;
}

export function canCountersign(visit: Visit, user: SessionUser | null): RuleAnswer {
  if (!user) return 'Sign in to countersign.';
  if (visit.fields.status === 'draft')
    return 'The visit must be signed before it is countersigned.';
  if (visit.fields.status === 'countersigned') return 'This visit is already countersigned.';
  if (visit.fields.needsCountersign !== true) return 'This visit does not need countersigning.';
  if (user.role !== 'supervisor') return 'Only a supervisor can countersign.';
  if (visit.fields.signedBy === user.id) return 'A supervisor cannot countersign their own visit.';
  return true;
}

export function canAddAddendum(visit: Visit): RuleAnswer {
  if (visit.fields.status === 'draft') {
    return 'This visit is not signed yet: change its Sections directly.';
  }
  return true;
}

/** The impression text of an addendum record: a marker line, then what was written. */
export function writeAddendumImpression(input: {
  authorId: string;
  authorName: string;
  writtenAt: string;
  text: string;
}): string {
  // Tabs cannot be typed into a person's name here, so they separate the marker's parts.
  const name = input.authorName.replace(/[\t\n]/g, ' ');
  return `${ADDENDUM_PREFIX}\t${input.writtenAt}\t${input.authorId}\t${name}\n${input.text}`;
}

/** The addendum a plan record holds, or null when it is the visit's own plan. */
export function parseAddendum(record: LocalRecord<'plan'>): Addendum | null {
  const impression = record.fields.impression;
  if (typeof impression !== 'string' || !impression.startsWith(`${ADDENDUM_PREFIX}\t`)) return null;
  const newline = impression.indexOf('\n');
  const header = newline === -1 ? impression : impression.slice(0, newline);
  const [, writtenAt = '', authorId = '', authorName = ''] = header.split('\t');
  return {
    id: record.id,
    authorId,
    authorName,
    writtenAt,
    text: newline === -1 ? '' : impression.slice(newline + 1),
    conflicts: record.conflicts,
  };
}
