// The server's check on a pushed letter change (a final letter never changes; delivery fields are
// the mailer's). The sync push planner calls it for collection `letter` with the stored record
// and the change's fields; a non-null answer rejects the change with that message.
import { letterChangeProblems } from '@fuselight/shared';
import type { StoredRecord } from '../records/stored-record';

export function letterPushProblem(
  current: Pick<StoredRecord, 'fields' | 'deleted'> | null | undefined,
  changedFields: Readonly<Record<string, unknown>>,
  options: { deleting?: boolean } = {},
): string | null {
  const stored = current && !current.deleted ? current.fields : null;
  if (options.deleting && stored?.status === 'final') {
    return 'deleted: this letter is final and cannot be deleted; it stays on the record';
  }
  const problems = letterChangeProblems(
    stored as Parameters<typeof letterChangeProblems>[0],
    changedFields,
  );
  if (problems.length === 0) return null;
  return problems.map((p) => `fields.${p.field}: ${p.message}`).join('; ');
}
