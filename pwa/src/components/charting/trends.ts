// A patient's findings across visits, shaped for the trend charts: every series comes from the
// shared findingSeries (one point per visit, gaps where a visit did not record it), amplitudes
// from fusionalRangeAmplitudes, and norms bands from the shared norms table with its name.
import {
  AMBLYOSCOPE_FUSIONAL_NORMS,
  fusionalRangeAmplitudes,
  findingSeries,
  rangeReadings,
  type FusionalDirection,
} from '@fuselight/shared';
import type { LocalRecord } from '../../data';
import type { VisitSectionRecords } from '../../data/charting';

export interface TrendVisit {
  date: string;
  visitId: string;
  sections: VisitSectionRecords;
}

export interface TrendSeries {
  key: string;
  label: string;
  points: { time: number; date: string; value: number | null }[];
}

export interface NormsBand {
  low: number;
  high: number;
  label: string;
}

export interface TrendChart {
  key: string;
  title: string;
  unit: string;
  series: TrendSeries[];
  band?: NormsBand;
  /** Which norms table the band comes from, or why there is none. */
  normsNote: string;
  /** Lower logMAR is better acuity: the axis runs the other way. */
  reversed?: boolean;
}

function field(record: { fields: unknown } | undefined, name: string): number | null {
  const value = (record?.fields as Record<string, unknown> | undefined)?.[name];
  return typeof value === 'number' && Number.isFinite(value) ? value : null;
}

function series(
  visits: readonly TrendVisit[],
  key: string,
  label: string,
  pick: (visit: TrendVisit) => number | null,
): TrendSeries {
  return {
    key,
    label,
    points: findingSeries(visits, pick).map((p) => ({
      time: p.time,
      date: p.date,
      value: p.value,
    })),
  };
}

function amplitude(visit: TrendVisit, direction: FusionalDirection): number | null {
  const picked = rangeReadings(
    visit.sections.fusionalRanges?.fields as Record<string, unknown> | undefined,
    visit.sections.amblyoscopeAngles?.fields as Record<string, unknown> | undefined,
  );
  if (!picked || picked.subjective === undefined) return null;
  try {
    const result = fusionalRangeAmplitudes({
      ...picked.readings,
      subjectiveAngleDeg: picked.subjective,
    });
    return result.amplitudes.find((a) => a.direction === direction)?.breakAmplitude ?? null;
  } catch {
    // A range that does not fit its start is shown as a gap; the Visit screen explains it.
    return null;
  }
}

function bandFor(direction: FusionalDirection): NormsBand | undefined {
  const row = AMBLYOSCOPE_FUSIONAL_NORMS.rows.find(
    (r) => r.direction === direction && r.point === 'break' && r.unit === 'deg',
  );
  if (!row || row.norm.kind !== 'range') return undefined;
  return {
    low: row.norm.low,
    high: row.norm.high,
    label: `${direction} break norm ${row.norm.low}–${row.norm.high}° (${row.citation})`,
  };
}

function acuityOf(visit: TrendVisit, eye: 'right' | 'left'): number | null {
  const va = visit.sections.visualAcuity;
  return field(va, `${eye}DistanceCorrectedLogMar`) ?? field(va, `${eye}DistanceUncorrectedLogMar`);
}

export function buildTrends(
  visits: readonly LocalRecord<'visit'>[],
  sectionsByVisit: ReadonlyMap<string, VisitSectionRecords>,
): TrendChart[] {
  const dated: TrendVisit[] = visits.map((visit) => ({
    date: visit.fields.date,
    visitId: visit.id,
    sections: sectionsByVisit.get(visit.id) ?? {},
  }));
  const table = `${AMBLYOSCOPE_FUSIONAL_NORMS.title}, version ${AMBLYOSCOPE_FUSIONAL_NORMS.version}`;
  const convergenceBand = bandFor('convergence');
  const charts: TrendChart[] = [
    {
      key: 'horizontal',
      title: 'Horizontal angle',
      unit: '°',
      series: [
        series(dated, 'objective', 'Objective (+ eso, − exo)', (v) =>
          field(v.sections.amblyoscopeAngles, 'objectiveHorizontalDeg'),
        ),
        series(dated, 'subjective', 'Subjective (+ eso, − exo)', (v) =>
          field(v.sections.amblyoscopeAngles, 'subjectiveHorizontalDeg'),
        ),
      ],
      normsNote: 'No norms band: an angle is compared with the patient’s own earlier visits.',
    },
    {
      key: 'vertical',
      title: 'Vertical angle',
      unit: 'Δ',
      series: [
        series(dated, 'objectiveVertical', 'Objective (+ R/L, − L/R)', (v) =>
          field(v.sections.amblyoscopeAngles, 'objectiveVerticalPd'),
        ),
      ],
      normsNote: 'No norms band: an angle is compared with the patient’s own earlier visits.',
    },
    {
      key: 'ranges',
      title: 'Fusional convergence and divergence (break amplitude)',
      unit: '°',
      series: [
        series(dated, 'convergence', 'Convergence break', (v) => amplitude(v, 'convergence')),
        series(dated, 'divergence', 'Divergence break', (v) => amplitude(v, 'divergence')),
      ],
      ...(convergenceBand ? { band: convergenceBand } : {}),
      normsNote: convergenceBand
        ? `Shaded band: convergence break norm from ${table}. ${convergenceBand.label}.${bandFor('divergence') ? ` Divergence: ${bandFor('divergence')!.label}.` : ''}`
        : `No norms band in ${table}.`,
    },
    {
      key: 'acuity',
      title: 'Distance visual acuity (corrected, else uncorrected)',
      unit: 'logMAR',
      series: [
        series(dated, 'rightAcuity', 'Right eye', (v) => acuityOf(v, 'right')),
        series(dated, 'leftAcuity', 'Left eye', (v) => acuityOf(v, 'left')),
      ],
      normsNote:
        'No norms band: expected acuity depends on age and the chart used. Lower logMAR is better.',
      reversed: true,
    },
  ];
  return charts;
}

export function hasAnyValue(chart: TrendChart): boolean {
  return chart.series.some((s) => s.points.some((p) => p.value !== null));
}
