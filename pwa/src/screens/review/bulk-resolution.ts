// Which open disputes may be resolved in bulk, and with what. Only two kinds qualify, and each is
// shown in a preview before anything is sent:
// - trivially equal: every candidate holds the same value (deep equality);
// - formatting only: the candidates differ as stored but read the same to the clinician (same
//   words on screen, or text that differs only in letter case or spacing).
// The value proposed is always the provisional candidate, so bulk never invents a value.
import { jsonEqual } from '@fuselight/shared';
import { formatFieldValue } from './field-format';
import type { DisputeRow } from './review-api';

export type BulkKind = 'trivially equal' | 'formatting only';

export interface BulkProposal {
  dispute: DisputeRow;
  kind: BulkKind;
  /** The value every device will hold after resolution. */
  value: unknown;
  /** Each distinct candidate as the clinician sees it. */
  shown: string[];
  note: string;
}

function normalisedText(value: unknown): string | null {
  return typeof value === 'string' ? value.trim().replace(/\s+/g, ' ').toLowerCase() : null;
}

export function classifyForBulk(dispute: DisputeRow): BulkKind | null {
  const values = dispute.candidates.map((candidate) => candidate.value);
  if (values.length < 2 || dispute.status !== 'open') return null;
  const [first, ...rest] = values;
  if (rest.every((value) => jsonEqual(value, first))) return 'trivially equal';
  const texts = values.map(normalisedText);
  if (texts.every((text) => text !== null && text === texts[0])) return 'formatting only';
  const shown = values.map((value) =>
    formatFieldValue(dispute.collection, dispute.field, value, { timeZone: dispute.timeZone }),
  );
  if (shown.every((text) => text === shown[0])) return 'formatting only';
  return null;
}

export function bulkProposals(disputes: readonly DisputeRow[]): BulkProposal[] {
  const proposals: BulkProposal[] = [];
  for (const dispute of disputes) {
    // A signed visit's dispute becomes an Addendum: always one at a time, never in bulk.
    if (dispute.signedVisit) continue;
    const kind = classifyForBulk(dispute);
    if (!kind) continue;
    const provisional =
      dispute.candidates.find((candidate) => candidate.provisional) ?? dispute.candidates[0];
    if (!provisional) continue;
    const shown = [
      ...new Set(
        dispute.candidates.map((candidate) =>
          formatFieldValue(dispute.collection, dispute.field, candidate.value, {
            timeZone: dispute.timeZone,
          }),
        ),
      ),
    ];
    proposals.push({
      dispute,
      kind,
      value: provisional.value,
      shown,
      note:
        kind === 'trivially equal'
          ? 'Bulk resolution: every candidate held the same value.'
          : 'Bulk resolution: the candidates differed only in formatting; kept the provisional value.',
    });
  }
  return proposals;
}
