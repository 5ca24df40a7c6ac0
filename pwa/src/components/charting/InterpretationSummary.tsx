// The computed interpretations of a visit's findings, always with the caution that they support
// and do not replace the clinician's judgement.
import { useMemo } from 'react';
import type { Addendum } from '../../data/charting';
import { AddendaList } from './AddendaList';
import { interpretVisit, type VisitSectionValues } from '@fuselight/shared';

export function CautionNote({ caution }: { caution: string }) {
  return (
    <p className="fl-caution" role="note">
      {caution} Computed interpretations defer to the clinician and to local protocols.
    </p>
  );
}

export function InterpretationSummary({
  sections,
  ageYears,
  addenda = [],
  who = (id) => id,
}: {
  sections: VisitSectionValues;
  ageYears: number | undefined;
  /** Addenda of a signed visit, shown under the signed content they add to or correct. */
  addenda?: readonly Addendum[];
  who?: (id: string) => string;
}) {
  const summary = useMemo(
    () => interpretVisit(sections, ageYears === undefined ? {} : { ageYears }),
    [sections, ageYears],
  );
  return (
    <section
      className="flc-panel"
      aria-labelledby="interpretation-title"
      id="section-interpretation"
    >
      <h2 id="interpretation-title">Interpretation</h2>
      <CautionNote caution={summary.caution} />
      {summary.items.length === 0 ? (
        <p>Nothing to interpret yet: findings appear here as the Sections are charted.</p>
      ) : (
        summary.items.map((item) => (
          <article
            key={item.key}
            className={`flc-interpretation${item.tone === 'attention' ? ' flc-interpretation--attention' : ''}`}
            aria-label={item.title}
          >
            <h3>
              {item.title}
              {item.tone === 'attention' ? <span className="flc-badge">Check</span> : null}
            </h3>
            {item.lines.map((line, i) => (
              <p key={i}>{line}</p>
            ))}
            {item.basis ? <p className="fl-muted">{item.basis}</p> : null}
          </article>
        ))
      )}
      {addenda.length > 0 ? (
        <div aria-labelledby="interpretation-addenda-title">
          <h3 id="interpretation-addenda-title">Addenda after signing</h3>
          <p className="fl-muted">
            Added after the visit was signed. A correction from a resolved dispute is already in the
            Section’s value above; the signed value is shown as the value before.
          </p>
          <AddendaList addenda={addenda} label="Addenda to the signed visit" who={who} />
        </div>
      ) : null}
    </section>
  );
}
