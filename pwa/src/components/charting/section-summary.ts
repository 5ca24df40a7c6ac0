// One line saying what a Section holds, for the Visit's scannable list: why it was not done, or
// its recorded values in the trade's words with their units, or that nothing is recorded yet.
import type { SectionCollectionName } from '@fuselight/shared';
import { metaOf, sectionFieldNames } from './SectionForm';

/** A stored value as a screen shows it: Yes/No, a number with its unit, an option's label. */
export function shownValue(
  collection: SectionCollectionName,
  field: string,
  value: unknown,
): string | null {
  if (value === null || value === undefined || value === '') return null;
  const meta = metaOf(collection, field);
  if (typeof value === 'boolean') return value ? 'Yes' : 'No';
  if (typeof value === 'number') {
    const sign = value > 0 && (meta.min ?? 0) < 0 ? '+' : '';
    return `${sign}${value}${meta.unit ? ` ${meta.unit}` : ''}`;
  }
  if (typeof value === 'string') {
    return meta.options?.find((o) => o.value === value)?.label ?? value;
  }
  if (Array.isArray(value)) {
    if (value.length === 0) return null;
    if (value.every((item) => typeof item === 'string')) {
      return (value as string[])
        .map((item) => meta.options?.find((o) => o.value === item)?.label ?? item)
        .join(', ');
    }
    return `${value.length} recorded`;
  }
  return null;
}

/** How many values the line names before it says how many more there are. */
const SHOWN_VALUES = 4;

export function sectionSummary(
  collection: SectionCollectionName,
  fields: Record<string, unknown> | undefined,
  names: readonly string[] = sectionFieldNames(collection),
): string {
  if (!fields) return 'Nothing recorded yet';
  const skipped = fields.skippedReason;
  if (typeof skipped === 'string' && skipped.trim() !== '') return `Not done: ${skipped}`;
  const parts = names
    .filter((field) => field !== 'skippedReason')
    .map((field) => {
      const value = shownValue(collection, field, fields[field]);
      return value === null ? null : `${metaOf(collection, field).label} ${value}`;
    })
    .filter((part): part is string => part !== null);
  if (parts.length === 0) return 'Nothing recorded yet';
  const more = parts.length - SHOWN_VALUES;
  return more > 0
    ? `${parts.slice(0, SHOWN_VALUES).join(' · ')} · and ${more} more`
    : parts.join(' · ');
}
