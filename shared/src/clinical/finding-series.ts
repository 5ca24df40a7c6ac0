// A finding's course across a patient's visits, shaped for charts: one point per visit in date
// order, with null where the visit did not record the finding so the chart shows a gap instead
// of joining across it.
import { ClinicalInputError } from './clinical-input.error';

export interface DatedVisit {
  /** ISO 8601 date or date-time of the visit, e.g. "2024-03-05" or "2024-03-05T09:30:00Z". */
  date: string;
}

export interface SeriesPoint<V extends DatedVisit> {
  date: string;
  /** Milliseconds since the epoch, for an x axis. */
  time: number;
  value: number | null;
  visit: V;
}

const ISO_DATE = /^\d{4}-\d{2}-\d{2}(?:T\d{2}:\d{2}(?::\d{2}(?:\.\d+)?)?(?:Z|[+-]\d{2}:\d{2})?)?$/;

function isCalendarDate(date: string): boolean {
  // Date.parse rolls 2024-02-30 over to 1 March; a chart must not move a visit silently.
  const [y, m, d] = date.slice(0, 10).split('-').map(Number) as [number, number, number];
  const probe = new Date(Date.UTC(y, m - 1, d));
  return probe.getUTCFullYear() === y && probe.getUTCMonth() === m - 1 && probe.getUTCDate() === d;
}

function parseVisitDate(field: string, date: string): number {
  const wellFormed = typeof date === 'string' && ISO_DATE.test(date) && isCalendarDate(date);
  const time = wellFormed ? Date.parse(date) : Number.NaN;
  if (!Number.isFinite(time)) {
    throw new ClinicalInputError(field, `must be an ISO 8601 date (got ${JSON.stringify(date)})`);
  }
  return time;
}

export function findingSeries<V extends DatedVisit>(
  visits: readonly V[],
  selector: (visit: V) => number | null | undefined,
): SeriesPoint<V>[] {
  const points = visits.map((visit, i): SeriesPoint<V> => {
    const time = parseVisitDate(`visits[${i}].date`, visit.date);
    const raw = selector(visit);
    if (raw !== null && raw !== undefined && !Number.isFinite(raw)) {
      throw new ClinicalInputError(
        `visits[${i}]`,
        `selected value must be a finite number, null or undefined (got ${String(raw)})`,
      );
    }
    return { date: visit.date, time, value: raw ?? null, visit };
  });
  // Array.prototype.sort is stable, so two visits on one day keep their recorded order.
  return points.sort((a, b) => a.time - b.time);
}

/** Runs of consecutive recorded points, one polyline each, split at the gaps. */
export function seriesSegments<V extends DatedVisit>(
  series: readonly SeriesPoint<V>[],
): { time: number; value: number }[][] {
  const segments: { time: number; value: number }[][] = [];
  let current: { time: number; value: number }[] = [];
  for (const point of series) {
    if (point.value === null) {
      if (current.length > 0) segments.push(current);
      current = [];
    } else {
      current.push({ time: point.time, value: point.value });
    }
  }
  if (current.length > 0) segments.push(current);
  return segments;
}
