// What the Bench recorded at the amblyoscope, in short, with the two main angles adjustable here
// (AngleControl) and a link to the full guided capture on the Bench.
import { collectionLabel, type SectionCollectionName } from '@fuselight/shared';
import { Link } from 'react-router-dom';
import { AngleControl } from '../controls';
import { BENCH_COLLECTIONS } from '../../data/bench/bench-sections';
import type { VisitSectionRecords } from '../../data/charting';
import { DisputeMark } from './ScreenState';
import { SaveIndicator, metaOf, sectionFieldNames } from './SectionForm';
import { SectionPanel } from './SectionPanel';
import { shownValue } from './section-summary';
import { useSectionAutosave, type SaveStatus } from './useSectionAutosave';

const AMBLYOSCOPE_SECTIONS: readonly [SectionCollectionName, string][] = BENCH_COLLECTIONS.map(
  (collection) => [collection, collectionLabel(collection)],
);

export function AmblyoscopeSummary({
  visitId,
  sections,
  locked,
  onStatus,
  folding,
}: {
  visitId: string;
  sections: VisitSectionRecords;
  locked: boolean;
  onStatus?: (status: SaveStatus) => void;
  /** Fold to a one-line summary (the Visit screen); absent: always open. */
  folding?: { open: boolean; onToggle: (open: boolean) => void };
}) {
  const angles = sections.amblyoscopeAngles;
  const autosave = useSectionAutosave(visitId, 'amblyoscopeAngles', angles?.fields, onStatus);
  const recorded = AMBLYOSCOPE_SECTIONS.map(([collection, title]) => {
    const record = sections[collection];
    const rows = record
      ? sectionFieldNames(collection)
          .map((field) => ({
            field,
            label: metaOf(collection, field).label,
            value: shownValue(collection, field, (record.fields as Record<string, unknown>)[field]),
          }))
          .filter((row) => row.value !== null)
      : [];
    return { collection, title, rows, conflicts: record?.conflicts ?? [] };
  }).filter((group) => group.rows.length > 0);

  const angleValue = (field: string) => {
    const value = autosave.valueOf(field);
    return typeof value === 'number' ? value : null;
  };

  const angleWords = (['objectiveHorizontalDeg', 'subjectiveHorizontalDeg'] as const)
    .map((field) => {
      const value = shownValue('amblyoscopeAngles', field, angleValue(field));
      return value === null ? null : `${metaOf('amblyoscopeAngles', field).label} ${value}`;
    })
    .filter((part): part is string => part !== null);
  const summary =
    [
      ...angleWords,
      ...(recorded.length > 0
        ? [`On the Bench: ${recorded.map((group) => group.title).join(', ')}`]
        : []),
    ].join(' · ') || 'Nothing recorded at the amblyoscope yet';
  const mustShow = autosave.status === 'invalid' || autosave.status === 'error';
  return (
    <SectionPanel
      id="section-amblyoscope"
      title="Amblyoscope"
      aside={<SaveIndicator status={autosave.status} error={autosave.saveError} />}
      folding={
        folding
          ? { open: folding.open || mustShow, onToggle: folding.onToggle, summary }
          : undefined
      }
    >
      <p>
        The full amblyoscope capture is on the Bench.{' '}
        <Link className="flc-button" to={`/bench/${visitId}`}>
          Open the Bench
        </Link>
      </p>
      <div className="flc-grid">
        {(['objectiveHorizontalDeg', 'subjectiveHorizontalDeg'] as const).map((field) => (
          <div key={field} className="flc-field">
            <AngleControl
              label={metaOf('amblyoscopeAngles', field).label}
              axis="horizontal"
              unit="deg"
              min={-90}
              max={90}
              value={angleValue(field)}
              disabled={locked}
              onChange={(value) => autosave.setField(field, value)}
            />
            <DisputeMark field={field} conflicts={angles?.conflicts ?? []} />
            <p className="flc-message flc-message--error">{autosave.errorOf(field) ?? ''}</p>
          </div>
        ))}
      </div>
      {recorded.length === 0 ? (
        <p className="fl-muted">Nothing recorded at the amblyoscope yet.</p>
      ) : (
        recorded.map((group) => (
          <div key={group.collection}>
            <h3>{group.title}</h3>
            <dl className="flc-grid">
              {group.rows.map((row) => (
                <div key={row.field}>
                  <dt className="fl-muted">
                    {row.label}
                    <DisputeMark field={row.field} conflicts={group.conflicts} />
                  </dt>
                  <dd style={{ margin: 0, fontWeight: 700 }}>{row.value}</dd>
                </div>
              ))}
            </dl>
          </div>
        ))
      )}
    </SectionPanel>
  );
}
