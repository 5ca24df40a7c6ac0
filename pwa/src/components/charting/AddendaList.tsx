// The Addenda of a signed visit, oldest first: who wrote each and when, what it says, and for an
// Addendum written when a supervisor resolved a dispute, the field it amends with the value
// before and after. Used in the Sign panel and under the visit's interpretation.
import { collectionLabel } from '@fuselight/shared';
import type { Addendum } from '../../data/charting';
import { describeFieldValue } from './format';
import { DisputeMark } from './ScreenState';

export function when(iso: string | null | undefined): string {
  if (!iso) return 'an unknown time';
  const date = new Date(iso);
  return Number.isNaN(date.getTime()) ? iso : date.toLocaleString();
}

/** "Amblyoscope angles · Objective horizontal angle: 12° → 21°" */
export function amendmentWords(addendum: Addendum): string | null {
  const a = addendum.amendment;
  if (!a) return null;
  const before = describeFieldValue(a.collection, a.field, a.previousValue);
  const after = describeFieldValue(a.collection, a.field, a.newValue);
  return `${collectionLabel(a.collection)} · ${a.fieldLabel}: ${before} → ${after}`;
}

export function AddendaList({
  addenda,
  label,
  who,
}: {
  addenda: readonly Addendum[];
  /** The list's accessible name. */
  label: string;
  /** How to name a person by id ("you" for the person signed in). */
  who: (id: string) => string;
}) {
  return (
    <ul className="flc-list" aria-label={label}>
      {addenda.map((item) => {
        const amended = amendmentWords(item);
        return (
          <li key={item.id} className="flc-addendum">
            <strong>
              {item.amendment?.conflictId ? 'Addendum from a resolved dispute' : 'Addendum'} by{' '}
              {item.authorName ?? who(item.authorId)}, {when(item.writtenAt)}
            </strong>
            <DisputeMark
              field={item.storedAs === 'plan' ? 'impression' : 'text'}
              conflicts={item.conflicts}
            />
            {amended ? (
              <>
                {'\n'}
                <span className="flc-addendum__amends">Amends {amended}</span>
              </>
            ) : null}
            {'\n'}
            {item.text}
          </li>
        );
      })}
    </ul>
  );
}
