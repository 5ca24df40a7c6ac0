// The computed interpretations of a visit's findings, always with the caution that they support
// and do not replace the clinician's judgement.
import { useMemo } from 'react';
import { interpretVisit, type VisitSectionValues } from './interpretations';

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
}: {
  sections: VisitSectionValues;
  ageYears: number | undefined;
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
    </section>
  );
}
