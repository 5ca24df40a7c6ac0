import { describe, expect, it } from 'vitest';
import { ClinicalInputError } from './clinical-input.error';
import { findingSeries, seriesSegments } from './finding-series';

interface Visit {
  date: string;
  angleDeg?: number;
}

const visits: Visit[] = [
  { date: '2024-06-01', angleDeg: 8 },
  { date: '2024-01-15', angleDeg: 14 },
  { date: '2024-03-10' },
  { date: '2024-09-20', angleDeg: 5 },
];

describe('findingSeries', () => {
  it('sorts the points by visit date', () => {
    const series = findingSeries(visits, (v) => v.angleDeg);
    expect(series.map((p) => p.date)).toEqual([
      '2024-01-15',
      '2024-03-10',
      '2024-06-01',
      '2024-09-20',
    ]);
  });

  it('leaves a gap where a visit did not record the finding', () => {
    const series = findingSeries(visits, (v) => v.angleDeg);
    expect(series.map((p) => p.value)).toEqual([14, null, 8, 5]);
  });

  it('splits the chart line at gaps', () => {
    const segments = seriesSegments(findingSeries(visits, (v) => v.angleDeg));
    expect(segments.map((s) => s.map((p) => p.value))).toEqual([[14], [8, 5]]);
  });

  it('keeps the recorded order of two visits on one day', () => {
    const sameDay = [
      { date: '2024-02-02', angleDeg: 1 },
      { date: '2024-02-02', angleDeg: 2 },
    ];
    expect(findingSeries(sameDay, (v) => v.angleDeg).map((p) => p.value)).toEqual([1, 2]);
  });

  it('rejects a date that is not ISO 8601 and a selected value that is not finite', () => {
    expect(() => findingSeries([{ date: '03/05/2024' }], () => 1)).toThrow(/visits\[0\]\.date/);
    expect(() => findingSeries([{ date: '2024-02-30' }], () => 1)).toThrow(ClinicalInputError);
    expect(() => findingSeries([{ date: '2024-13-01' }], () => 1)).toThrow(ClinicalInputError);
    expect(() => findingSeries([{ date: '2024-02-02' }], () => Number.NaN)).toThrow(
      ClinicalInputError,
    );
  });
});
