// One Section of a visit as a form built from the shared field metadata: labels in the trade's
// words, units beside numbers, the schema's message beside a refused value, "Disputed" beside a
// field in an open sync conflict. Every change is saved through useSectionAutosave.
import {
  SECTION_PLACEMENT_KEYS,
  fieldMeta,
  type FieldMeta,
  type SectionCollectionName,
} from '@fuselight/shared';
import { useId, type ReactNode } from 'react';
import { ChoiceGroup, YesNoChoice } from '../controls';
import { DisputeMark } from './ScreenState';
import { SectionPanel } from './SectionPanel';
import { sectionSummary } from './section-summary';
import {
  saveStatusWords,
  useSectionAutosave,
  type SaveStatus,
  type SectionAutosave,
} from './useSectionAutosave';
import './charting.css';

export interface SectionFormProps {
  visitId: string;
  collection: SectionCollectionName;
  title: string;
  /** The stored Section, if it exists yet. */
  record: { fields: Record<string, unknown>; conflicts: string[] } | undefined;
  locked: boolean;
  /** Which fields, in order; default every field of the collection. */
  fields?: readonly string[];
  onStatus?: (status: SaveStatus) => void;
  /** Extra content above the fields (e.g. a custom entry). */
  children?: (autosave: SectionAutosave) => ReactNode;
  intro?: ReactNode;
  /** Fold to a one-line summary (the Visit screen); absent: always open. */
  folding?: { open: boolean; onToggle: (open: boolean) => void };
}

const placement: ReadonlySet<string> = new Set(SECTION_PLACEMENT_KEYS);

export function metaOf(collection: SectionCollectionName, field: string): FieldMeta {
  return (
    (fieldMeta[collection] as Record<string, FieldMeta>)[field] ?? {
      label: field,
      unit: null,
      kind: 'text',
      required: false,
    }
  );
}

export function sectionFieldNames(collection: SectionCollectionName): string[] {
  return Object.keys(fieldMeta[collection]).filter((field) => !placement.has(field));
}

/** Reads typed number text; "" clears, a comma or a typographic minus is accepted. */
export function parseNumberEntry(
  text: string,
  label: string,
): { value: number | null } | { error: string } {
  const cleaned = text
    .trim()
    .replace(/\u2212/g, '-')
    .replace(',', '.');
  if (cleaned === '') return { value: null };
  const value = Number(cleaned);
  if (!Number.isFinite(value) || !/^[-+]?(\d+\.?\d*|\.\d+)$/.test(cleaned)) {
    return { error: `${label} must be a number` };
  }
  return { value };
}

interface FieldProps {
  collection: SectionCollectionName;
  field: string;
  autosave: SectionAutosave;
  conflicts: readonly string[];
  locked: boolean;
}

export function SectionField({ collection, field, autosave, conflicts, locked }: FieldProps) {
  const meta = metaOf(collection, field);
  const id = useId();
  const messageId = `${id}-message`;
  const error = autosave.errorOf(field);
  const value = autosave.valueOf(field);
  const message = (
    <p id={messageId} className="flc-message flc-message--error">
      {error ?? ''}
    </p>
  );
  const dispute = <DisputeMark field={field} conflicts={conflicts} />;
  const common = {
    id,
    className: 'flc-input',
    disabled: locked,
    'aria-invalid': error ? ('true' as const) : ('false' as const),
    'aria-describedby': messageId,
    onBlur: () => autosave.flush(),
  };

  switch (meta.kind) {
    case 'number': {
      const raw = autosave.rawOf(field);
      const shown = raw ?? (typeof value === 'number' ? String(value) : '');
      const range =
        meta.min !== undefined && meta.max !== undefined ? `${meta.min} to ${meta.max}` : undefined;
      return (
        <div className="flc-field">
          <label htmlFor={id}>
            {meta.label}
            {dispute}
          </label>
          <div className="flc-unit">
            <input
              {...common}
              type="text"
              inputMode="decimal"
              autoComplete="off"
              value={shown}
              placeholder={range}
              onChange={(event) => {
                const text = event.target.value;
                const parsed = parseNumberEntry(text, meta.label);
                if ('error' in parsed)
                  autosave.setField(field, null, { raw: text, parseError: parsed.error });
                else autosave.setField(field, parsed.value, { raw: text });
              }}
            />
            <span aria-hidden={meta.unit === null}>{meta.unit ?? ''}</span>
          </div>
          {meta.hint ? <p className="fl-muted flc-message">{meta.hint}</p> : null}
          {message}
        </div>
      );
    }
    case 'choice':
      return (
        <div className="flc-field">
          <ChoiceGroup
            label={meta.label}
            options={meta.options ?? []}
            value={typeof value === 'string' ? value : null}
            onChange={(next) => {
              autosave.setField(field, next);
              autosave.flush();
            }}
            disabled={locked}
          />
          {dispute}
          {message}
        </div>
      );
    case 'boolean':
      return (
        <div className="flc-field">
          <YesNoChoice
            label={meta.label}
            value={typeof value === 'boolean' ? value : null}
            onChange={(next) => {
              autosave.setField(field, next);
              autosave.flush();
            }}
            disabled={locked}
          />
          {dispute}
          {message}
        </div>
      );
    case 'choices': {
      const chosen = Array.isArray(value) ? (value as string[]) : [];
      return (
        <fieldset className="flc-choice" disabled={locked}>
          <legend>
            {meta.label}
            {dispute}
          </legend>
          <div className="flc-choice__options">
            {(meta.options ?? []).map((option) => (
              <label key={option.value} className="flc-choice__option">
                <input
                  type="checkbox"
                  checked={chosen.includes(option.value)}
                  onChange={(event) => {
                    const next = event.target.checked
                      ? [...chosen, option.value]
                      : chosen.filter((v) => v !== option.value);
                    autosave.setField(field, next);
                    autosave.flush();
                  }}
                />
                <span>{option.label}</span>
              </label>
            ))}
          </div>
          {message}
        </fieldset>
      );
    }
    case 'list': {
      const raw = autosave.rawOf(field);
      const shown = raw ?? (Array.isArray(value) ? (value as string[]).join('\n') : '');
      return (
        <div className="flc-field">
          <label htmlFor={id}>
            {meta.label} (one a line)
            {dispute}
          </label>
          <textarea
            {...common}
            value={shown}
            onChange={(event) => {
              const text = event.target.value;
              const items = text
                .split('\n')
                .map((line) => line.trim())
                .filter((line) => line !== '');
              autosave.setField(field, items, { raw: text });
            }}
          />
          {message}
        </div>
      );
    }
    case 'id':
    case 'date':
    case 'datetime':
    case 'email':
    case 'object':
    case 'text': {
      const shown = typeof value === 'string' ? value : '';
      const long = field === 'impression' || field === 'notes';
      const onChange = (text: string) =>
        autosave.setField(field, text === '' ? null : text, { raw: text });
      const raw = autosave.rawOf(field) ?? shown;
      return (
        <div className="flc-field">
          <label htmlFor={id}>
            {meta.label}
            {dispute}
          </label>
          {long ? (
            <textarea {...common} value={raw} onChange={(event) => onChange(event.target.value)} />
          ) : (
            <input
              {...common}
              type="text"
              autoComplete="off"
              value={raw}
              onChange={(event) => onChange(event.target.value)}
            />
          )}
          {message}
        </div>
      );
    }
  }
}

export function SaveIndicator({ status, error }: { status: SaveStatus; error: string | null }) {
  return (
    <span
      className={`flc-saved${status === 'error' || status === 'invalid' ? ' flc-saved--error' : ''}`}
      role="status"
      aria-live="polite"
    >
      {saveStatusWords(status, error)}
    </span>
  );
}

export function SectionForm({
  visitId,
  collection,
  title,
  record,
  locked,
  fields,
  onStatus,
  children,
  intro,
  folding,
}: SectionFormProps) {
  const autosave = useSectionAutosave(visitId, collection, record?.fields, onStatus);
  const names = fields ?? sectionFieldNames(collection);
  // A refused or unsaved value keeps its Section open, where its message is.
  const mustShow = autosave.status === 'invalid' || autosave.status === 'error';
  return (
    <SectionPanel
      id={`section-${collection}`}
      title={title}
      aside={<SaveIndicator status={autosave.status} error={autosave.saveError} />}
      folding={
        folding
          ? {
              open: folding.open || mustShow,
              onToggle: folding.onToggle,
              summary: sectionSummary(collection, record?.fields, names),
            }
          : undefined
      }
    >
      {intro}
      {children?.(autosave)}
      <div className="flc-grid">
        {names.map((field) => (
          <SectionField
            key={field}
            collection={collection}
            field={field}
            autosave={autosave}
            conflicts={record?.conflicts ?? []}
            locked={locked}
          />
        ))}
      </div>
    </SectionPanel>
  );
}
