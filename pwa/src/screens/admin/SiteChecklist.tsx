import { useId } from 'react';
import type { AdminSite } from '../../auth/identity-api';

/** Sites as large checkboxes, for a person's or a tablet's site set. */
export function SiteChecklist({
  legend,
  sites,
  value,
  onChange,
  error,
}: {
  legend: string;
  sites: AdminSite[];
  value: string[];
  onChange: (siteIds: string[]) => void;
  error?: string | undefined;
}) {
  const errorId = useId();
  return (
    <fieldset
      className="fl-id-field fl-id-checks"
      aria-describedby={error ? errorId : undefined}
      style={{ border: 0, padding: 0 }}
    >
      <legend style={{ fontWeight: 700 }}>{legend}</legend>
      {sites.length === 0 ? (
        <p className="fl-id-hint">No sites yet: add one on the Sites screen first.</p>
      ) : null}
      {sites.map((site) => (
        <label key={site.id}>
          <input
            type="checkbox"
            checked={value.includes(site.id)}
            onChange={(e) =>
              onChange(
                e.target.checked ? [...value, site.id] : value.filter((id) => id !== site.id),
              )
            }
          />
          {site.name}
          {site.kind === 'outreach' ? ' (outreach)' : ''}
        </label>
      ))}
      {error ? (
        <p id={errorId} className="fl-id-error" role="alert">
          {error}
        </p>
      ) : null}
    </fieldset>
  );
}

export function siteNames(sites: AdminSite[] | undefined, ids: string[]): string {
  if (ids.length === 0) return 'no sites';
  const byId = new Map((sites ?? []).map((s) => [s.id, s.name]));
  return ids.map((id) => byId.get(id) ?? 'unknown site').join(', ');
}
