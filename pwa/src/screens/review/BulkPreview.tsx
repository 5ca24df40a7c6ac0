// The preview before a bulk resolution: each dispute, what its candidates read as, and the value
// it will get. Nothing is sent until the supervisor confirms; each is resolved on its own, so a
// refusal of one (say, resolved meanwhile on another desk) is reported and the rest go ahead.
import { collectionLabel } from '@fuselight/shared';
import { useState } from 'react';
import { fieldLabel, formatFieldValue } from './field-format';
import type { BulkProposal } from './bulk-resolution';

export interface BulkOutcome {
  id: string;
  ok: boolean;
  message: string;
}

export function BulkPreview({
  proposals,
  onConfirm,
  onCancel,
}: {
  proposals: BulkProposal[];
  onConfirm: (proposals: BulkProposal[]) => Promise<BulkOutcome[]>;
  onCancel: () => void;
}) {
  const [outcomes, setOutcomes] = useState<BulkOutcome[] | null>(null);
  const [busy, setBusy] = useState(false);
  const outcomeOf = (id: string) => outcomes?.find((o) => o.id === id);
  return (
    <section className="fl-review-panel" aria-labelledby="bulk-title">
      <h2 id="bulk-title">Bulk resolution: preview</h2>
      <p>
        These {proposals.length} disputes hold values that are the same, or differ only in how they
        were written. Each keeps its provisional value. Check each one before confirming.
      </p>
      <ol className="fl-review-bulk">
        {proposals.map((proposal) => {
          const { dispute } = proposal;
          const outcome = outcomeOf(dispute.id);
          return (
            <li
              key={dispute.id}
              aria-label={`${dispute.patientName ?? 'Patient'}: ${fieldLabel(dispute.collection, dispute.field)}`}
            >
              <strong>
                {dispute.patientName ?? 'Patient not on record'} ·{' '}
                {collectionLabel(dispute.collection)}:{' '}
                {fieldLabel(dispute.collection, dispute.field)}
              </strong>
              <span className="fl-review-badge">{proposal.kind}</span>
              <div>Entered: {proposal.shown.join(' / ')}</div>
              <div>
                Will be:{' '}
                {formatFieldValue(dispute.collection, dispute.field, proposal.value, {
                  timeZone: dispute.timeZone,
                })}
              </div>
              {outcome ? (
                <div role="status" className={outcome.ok ? 'fl-review-ok' : 'fl-field-error'}>
                  {outcome.message}
                </div>
              ) : null}
            </li>
          );
        })}
      </ol>
      <div className="fl-review-actions">
        {outcomes === null ? (
          <button
            type="button"
            className="fl-touch fl-button fl-button--primary"
            disabled={busy || proposals.length === 0}
            onClick={() => {
              setBusy(true);
              void onConfirm(proposals)
                .then(setOutcomes)
                .finally(() => setBusy(false));
            }}
          >
            {busy ? 'Resolving…' : `Confirm and resolve ${proposals.length}`}
          </button>
        ) : null}
        <button type="button" className="fl-touch fl-button fl-button--quiet" onClick={onCancel}>
          {outcomes === null ? 'Cancel' : 'Back to Disputes'}
        </button>
      </div>
    </section>
  );
}
