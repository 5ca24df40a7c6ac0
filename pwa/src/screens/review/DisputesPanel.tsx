// The Disputes table: open disputes of the supervisor's sites, sortable by column, filtered by
// site, patient, section and age, paged by the server (each page's `next` cursor asks for the
// one after it; the panel keeps the cursors of the pages before, for Previous page); bulk resolution of trivially equal or
// formatting-only ones through a preview.
import { SECTION_COLLECTIONS, collectionLabel } from '@fuselight/shared';
import { keepPreviousData, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { BulkPreview, type BulkOutcome } from './BulkPreview';
import { bulkProposals, type BulkProposal } from './bulk-resolution';
import { fieldLabel, formatAge, formatFieldValue } from './field-format';
import { type DisputeQuery, type DisputeSort } from './review-api';
import { useReviewApi } from './review-context';
import { queryKeys } from '../../data/query-keys';

const AGE_CHOICES = [
  { label: 'Any age', hours: undefined },
  { label: 'Open 1 hour or more', hours: 1 },
  { label: 'Open 1 day or more', hours: 24 },
  { label: 'Open 1 week or more', hours: 168 },
] as const;

const SECTIONS = ['patient', 'visit', ...SECTION_COLLECTIONS] as const;

export function DisputesPanel({ onOpen, now }: { onOpen: (id: string) => void; now: Date }) {
  const api = useReviewApi();
  const queryClient = useQueryClient();
  const [filters, setFilters] = useState<Omit<DisputeQuery, 'cursor'>>({
    sort: 'age',
    direction: 'asc',
    pageSize: 25,
  });
  // The cursors of page 2 up to the page shown (empty on the first page).
  const [cursors, setCursors] = useState<string[]>([]);
  const cursor = cursors.at(-1);
  const query: DisputeQuery = cursor ? { ...filters, cursor } : filters;
  const [bulk, setBulk] = useState<BulkProposal[] | null>(null);
  const disputes = useQuery({
    queryKey: queryKeys.review.disputes(query),
    queryFn: () => api.disputes(query),
    placeholderData: keepPreviousData,
  });

  const change = (patch: Partial<Omit<DisputeQuery, 'cursor'>>) => {
    setCursors([]);
    setFilters((q) => ({ ...q, ...patch }));
  };
  const sortBy = (sort: DisputeSort) =>
    change({
      sort,
      direction: filters.sort === sort && filters.direction === 'asc' ? 'desc' : 'asc',
    });
  const ariaSort = (sort: DisputeSort) =>
    query.sort === sort ? (query.direction === 'desc' ? 'descending' : 'ascending') : 'none';

  if (bulk) {
    const confirm = async (proposals: BulkProposal[]): Promise<BulkOutcome[]> => {
      const outcomes: BulkOutcome[] = [];
      for (const proposal of proposals) {
        try {
          await api.resolve(proposal.dispute.id, {
            value: proposal.value as never,
            note: proposal.note,
          });
          outcomes.push({ id: proposal.dispute.id, ok: true, message: 'Resolved.' });
        } catch (error) {
          outcomes.push({
            id: proposal.dispute.id,
            ok: false,
            message: error instanceof Error ? error.message : String(error),
          });
        }
      }
      await queryClient.invalidateQueries({ queryKey: queryKeys.review.all() });
      return outcomes;
    };
    return <BulkPreview proposals={bulk} onConfirm={confirm} onCancel={() => setBulk(null)} />;
  }

  const page = disputes.data;
  const proposals = page ? bulkProposals(page.items) : [];
  const pages = page ? Math.max(1, Math.ceil(page.total / page.pageSize)) : 1;

  return (
    <section className="fl-review-panel" aria-labelledby="disputes-title">
      <h2 id="disputes-title">Disputes</h2>
      <div className="fl-review-filters" role="search" aria-label="Filter disputes">
        <label>
          Site
          <select
            className="fl-touch fl-input"
            value={query.siteId ?? ''}
            onChange={(e) => change({ siteId: e.target.value || undefined })}
          >
            <option value="">All my sites</option>
            {page?.facets.sites.map((site) => (
              <option key={site.id} value={site.id}>
                {site.name}
              </option>
            ))}
          </select>
        </label>
        <label>
          Patient
          <input
            className="fl-touch fl-input"
            type="search"
            value={query.patient ?? ''}
            placeholder="Name"
            onChange={(e) => change({ patient: e.target.value || undefined })}
          />
        </label>
        <label>
          Section
          <select
            className="fl-touch fl-input"
            value={query.section ?? ''}
            onChange={(e) =>
              change({ section: (e.target.value || undefined) as DisputeQuery['section'] })
            }
          >
            <option value="">All sections</option>
            {SECTIONS.map((section) => (
              <option key={section} value={section}>
                {collectionLabel(section)}
              </option>
            ))}
          </select>
        </label>
        <label>
          Age
          <select
            className="fl-touch fl-input"
            value={String(query.minAgeHours ?? '')}
            onChange={(e) =>
              change({ minAgeHours: e.target.value ? Number(e.target.value) : undefined })
            }
          >
            {AGE_CHOICES.map((choice) => (
              <option key={choice.label} value={choice.hours ?? ''}>
                {choice.label}
              </option>
            ))}
          </select>
        </label>
      </div>

      {proposals.length > 0 ? (
        <p>
          <button type="button" className="fl-touch fl-button" onClick={() => setBulk(proposals)}>
            Preview bulk resolution of {proposals.length} trivially equal or formatting-only{' '}
            {proposals.length === 1 ? 'dispute' : 'disputes'}
          </button>
        </p>
      ) : null}

      {disputes.isPending ? (
        <p role="status">Loading disputes…</p>
      ) : disputes.isError ? (
        <div role="alert">
          <p>The disputes could not be loaded: {disputes.error.message}</p>
          <button
            type="button"
            className="fl-touch fl-button"
            onClick={() => void disputes.refetch()}
          >
            Try again
          </button>
        </div>
      ) : page && page.items.length === 0 ? (
        <p role="status">
          {page.openTotal === 0
            ? 'No open disputes in your sites. Every tablet’s edits agree.'
            : 'No disputes match these filters.'}
        </p>
      ) : page ? (
        <>
          <table className="fl-review-table">
            <caption className="fl-visually-hidden">
              Open disputes, {page.total} in all, sorted by {query.sort}
            </caption>
            <thead>
              <tr>
                <th scope="col" aria-sort={ariaSort('patient')}>
                  <button
                    type="button"
                    className="fl-touch fl-review-sort"
                    onClick={() => sortBy('patient')}
                  >
                    Patient
                  </button>
                </th>
                <th scope="col" aria-sort={ariaSort('section')}>
                  <button
                    type="button"
                    className="fl-touch fl-review-sort"
                    onClick={() => sortBy('section')}
                  >
                    Section and field
                  </button>
                </th>
                <th scope="col">Values entered</th>
                <th scope="col" aria-sort={ariaSort('site')}>
                  <button
                    type="button"
                    className="fl-touch fl-review-sort"
                    onClick={() => sortBy('site')}
                  >
                    Site
                  </button>
                </th>
                <th scope="col" aria-sort={ariaSort('age')}>
                  <button
                    type="button"
                    className="fl-touch fl-review-sort"
                    onClick={() => sortBy('age')}
                  >
                    Open since
                  </button>
                </th>
                <th scope="col">
                  <span className="fl-visually-hidden">Open</span>
                </th>
              </tr>
            </thead>
            <tbody>
              {page.items.map((row) => (
                <tr key={row.id}>
                  <td>
                    {row.patientName ?? 'Not on record'}
                    {row.signedVisit ? <span className="fl-review-badge">Signed visit</span> : null}
                  </td>
                  <td>
                    {collectionLabel(row.collection)}: {fieldLabel(row.collection, row.field)}
                  </td>
                  <td>
                    {row.candidates
                      .map((c) =>
                        formatFieldValue(row.collection, row.field, c.value, {
                          timeZone: row.timeZone,
                        }),
                      )
                      .join(' / ')}
                  </td>
                  <td>{row.siteName ?? '—'}</td>
                  <td>{formatAge(row.openedAt, now)}</td>
                  <td>
                    <button
                      type="button"
                      className="fl-touch fl-button"
                      aria-label={`Open the dispute on ${fieldLabel(row.collection, row.field)} for ${row.patientName ?? 'this patient'}`}
                      onClick={() => onOpen(row.id)}
                    >
                      Open
                    </button>
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
          <nav className="fl-review-pager" aria-label="Pages of disputes">
            <button
              type="button"
              className="fl-touch fl-button fl-button--quiet"
              disabled={cursors.length === 0}
              onClick={() => setCursors((c) => c.slice(0, -1))}
            >
              Previous page
            </button>
            <span>
              Page {page.page} of {pages} ({page.total} {page.total === 1 ? 'dispute' : 'disputes'})
            </span>
            <button
              type="button"
              className="fl-touch fl-button fl-button--quiet"
              disabled={!page.next}
              onClick={() => {
                const next = page.next;
                // While the next page loads the shown page stays; a second tap adds nothing.
                if (next) setCursors((c) => (c.at(-1) === next ? c : [...c, next]));
              }}
            >
              Next page
            </button>
          </nav>
        </>
      ) : null}
    </section>
  );
}
