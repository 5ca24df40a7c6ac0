// The suppression scotoma drawn on a field map centred on the fovea (where the objective angle
// says it points). Geometry comes from the shared suppressionScotomaRegion; this only draws.
import type { ScotomaRegion } from '@fuselight/shared';

const f = (n: number) => (Math.round(n * 10) / 10).toFixed(1);

export function describeRegion(region: ScotomaRegion): string {
  const eye = region.eye === 'right' ? 'right eye' : 'left eye';
  const side = (x: number) =>
    x === 0 ? 'at the fovea' : `${f(Math.abs(x))}° ${x > 0 ? 'convergent' : 'divergent'}`;
  const vertical =
    region.yMinDeg !== null && region.yMaxDeg !== null
      ? `, ${side2(region.yMaxDeg)} to ${side2(region.yMinDeg)}`
      : ', vertical extent not mapped';
  const covers =
    region.coversFovea === null
      ? 'the horizontal span crosses the fovea'
      : region.coversFovea
        ? 'it covers the fovea'
        : 'it does not cover the fovea';
  return `Scotoma of the ${eye}: ${side(region.xMinDeg)} to ${side(region.xMaxDeg)} (width ${f(region.widthDeg)}°)${vertical}; ${covers}.`;
}

function side2(y: number): string {
  return y === 0 ? 'level with the fovea' : `${f(Math.abs(y))}° ${y > 0 ? 'up' : 'down'}`;
}

export function ScotomaMap({ region }: { region: ScotomaRegion | null }) {
  const extents = region
    ? [region.xMinDeg, region.xMaxDeg, region.yMinDeg ?? 0, region.yMaxDeg ?? 0].map(Math.abs)
    : [];
  const half = Math.max(15, Math.ceil((Math.max(0, ...extents) + 3) / 5) * 5);
  const ticks: number[] = [];
  for (let t = -half; t <= half; t += 5) ticks.push(t);
  const label = region ? describeRegion(region) : 'Field map: no scotoma drawn yet.';
  return (
    <figure className="fl-scotoma">
      <svg
        viewBox={`${-half} ${-half} ${half * 2} ${half * 2}`}
        role="img"
        aria-label={label}
        className="fl-scotoma__map"
      >
        {ticks.map((t) => (
          <g key={t} className="fl-scotoma__grid">
            <line x1={t} y1={-half} x2={t} y2={half} />
            <line x1={-half} y1={t} x2={half} y2={t} />
          </g>
        ))}
        <line className="fl-scotoma__axis" x1={-half} y1={0} x2={half} y2={0} />
        <line className="fl-scotoma__axis" x1={0} y1={-half} x2={0} y2={half} />
        {region?.svg.ellipse ? (
          <ellipse
            className="fl-scotoma__region"
            data-testid="scotoma-region"
            cx={region.svg.ellipse.cx}
            cy={region.svg.ellipse.cy}
            rx={region.svg.ellipse.rx}
            ry={region.svg.ellipse.ry}
          />
        ) : region ? (
          <line
            className="fl-scotoma__span"
            data-testid="scotoma-region"
            x1={region.svg.span.x1}
            x2={region.svg.span.x2}
            y1={0}
            y2={0}
          />
        ) : null}
        <circle className="fl-scotoma__fovea" cx={0} cy={0} r={half / 40} />
        <text className="fl-scotoma__text" x={half - 1} y={-1} textAnchor="end">
          convergent
        </text>
        <text className="fl-scotoma__text" x={-half + 1} y={-1}>
          divergent
        </text>
        <text className="fl-scotoma__text" x={1} y={-half + 3}>
          up
        </text>
        <text className="fl-scotoma__text" x={1} y={half - 1}>
          down
        </text>
      </svg>
      <figcaption>{label} Grid lines every 5°; the dot is the fovea.</figcaption>
    </figure>
  );
}
