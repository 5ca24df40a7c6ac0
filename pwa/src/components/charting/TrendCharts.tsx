// The recharts trend charts of a patient's Chart, loaded as their own chunk. Each chart has a
// text alternative (a table of the same numbers) for screen readers and for reading exactly.
import {
  CartesianGrid,
  Legend,
  Line,
  LineChart,
  ReferenceArea,
  ResponsiveContainer,
  Tooltip,
  XAxis,
  YAxis,
} from 'recharts';
import { CautionNote } from './InterpretationSummary';
import { formatDate } from './format';
import { hasAnyValue, type TrendChart } from './trends';

const COLOURS = ['var(--ion-color-primary)', 'var(--ion-color-secondary)'];
const DASHES = ['', '6 4'];

function rows(chart: TrendChart) {
  const byTime = new Map<number, Record<string, number | null | string>>();
  for (const s of chart.series) {
    for (const p of s.points) {
      const row = byTime.get(p.time) ?? { time: p.time, date: p.date };
      row[s.key] = p.value;
      byTime.set(p.time, row);
    }
  }
  return [...byTime.values()].sort((a, b) => Number(a.time) - Number(b.time));
}

function OneChart({ chart }: { chart: TrendChart }) {
  const data = rows(chart);
  const titleId = `trend-${chart.key}`;
  return (
    <figure className="flc-panel" aria-labelledby={titleId} style={{ margin: 0 }}>
      <h3 id={titleId} style={{ marginTop: 0 }}>
        {chart.title} ({chart.unit})
      </h3>
      <div className="flc-chart" aria-hidden="true">
        <ResponsiveContainer width="100%" height="100%">
          <LineChart data={data} margin={{ top: 8, right: 16, bottom: 8, left: 0 }}>
            <CartesianGrid strokeDasharray="3 3" stroke="var(--fl-border)" />
            <XAxis
              dataKey="time"
              type="number"
              scale="time"
              domain={['dataMin', 'dataMax']}
              tickFormatter={(t: number) => formatDate(new Date(t).toISOString().slice(0, 10))}
              stroke="var(--fl-muted)"
            />
            <YAxis reversed={chart.reversed ?? false} stroke="var(--fl-muted)" width={48} />
            {chart.band ? (
              <ReferenceArea
                y1={chart.band.low}
                y2={chart.band.high}
                fill="var(--ion-color-success)"
                fillOpacity={0.15}
                stroke="none"
              />
            ) : null}
            <Tooltip
              labelFormatter={(t) => formatDate(new Date(Number(t)).toISOString().slice(0, 10))}
            />
            <Legend />
            {chart.series.map((s, i) => (
              <Line
                key={s.key}
                dataKey={s.key}
                name={s.label}
                stroke={COLOURS[i % COLOURS.length]}
                strokeDasharray={DASHES[i % DASHES.length]}
                strokeWidth={3}
                dot={{ r: 5 }}
                connectNulls={false}
                isAnimationActive={false}
              />
            ))}
          </LineChart>
        </ResponsiveContainer>
      </div>
      <figcaption className="fl-muted">{chart.normsNote}</figcaption>
      <table className="flc-table">
        <caption className="flc-visually-hidden">{chart.title}, by visit</caption>
        <thead>
          <tr>
            <th scope="col">Visit</th>
            {chart.series.map((s) => (
              <th key={s.key} scope="col">
                {s.label}
              </th>
            ))}
          </tr>
        </thead>
        <tbody>
          {data.map((row) => (
            <tr key={String(row.time)}>
              <th scope="row">{formatDate(String(row.date))}</th>
              {chart.series.map((s) => (
                <td key={s.key}>
                  {typeof row[s.key] === 'number'
                    ? `${Number(row[s.key]).toFixed(chart.unit === 'logMAR' ? 2 : 1)}`
                    : '—'}
                </td>
              ))}
            </tr>
          ))}
        </tbody>
      </table>
    </figure>
  );
}

export default function TrendCharts({
  charts,
  caution,
}: {
  charts: TrendChart[];
  caution: string;
}) {
  const shown = charts.filter(hasAnyValue);
  return (
    <div style={{ display: 'grid', gap: 16 }}>
      <CautionNote caution={caution} />
      {shown.length === 0 ? (
        <p>No findings to draw yet: trends appear once visits record angles, ranges or acuity.</p>
      ) : (
        shown.map((chart) => <OneChart key={chart.key} chart={chart} />)
      )}
    </div>
  );
}
