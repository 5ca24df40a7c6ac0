// A suppression scotoma mapped on the amblyoscope (docs/clinical-reference.md, "The assessment"):
// with SP slides at the objective angle, the tube before the deviating eye is moved either side
// until the picture is lost; those positions bound the scotoma horizontally, and the vertical
// controls bound it vertically. This turns the recorded positions into a region on a field map
// centred on the fovea (the objective angle), in degrees, ready for an SVG.
import { ClinicalInputError } from './clinical-input.error';
import { requireAngleDeg } from './validate';

export interface ScotomaReadings {
  eye: 'right' | 'left';
  /** Where the fovea points: the objective angle on each scale, degrees. */
  objectiveHorizontalDeg: number;
  objectiveVerticalDeg?: number;
  /** The two horizontal scale positions where the picture was lost, degrees. */
  horizontalLostDeg: readonly [number, number];
  /** The two vertical positions where it was lost, degrees; omitted if not mapped. */
  verticalLostDeg?: readonly [number, number];
}

export interface ScotomaRegion {
  eye: 'right' | 'left';
  /**
   * Extents relative to the fovea in degrees: x along the horizontal scale (+ in the convergent
   * direction of the tube), y along the vertical scale (+ up). Which side is nasal on the drawn
   * map depends on the eye; the map component mirrors for it.
   */
  xMinDeg: number;
  xMaxDeg: number;
  yMinDeg: number | null;
  yMaxDeg: number | null;
  widthDeg: number;
  heightDeg: number | null;
  verticalRecorded: boolean;
  /** null when the horizontal span covers the fovea but the vertical extent was not mapped. */
  coversFovea: boolean | null;
  /** SVG geometry in degree units with y pointing down, for a viewBox centred on (0, 0). */
  svg: {
    ellipse: { cx: number; cy: number; rx: number; ry: number } | null;
    rect: { x: number; y: number; width: number; height: number } | null;
    /** When the vertical extent was not mapped: the horizontal span only. */
    span: { x1: number; x2: number; y: number };
  };
}

function orderedPair(field: string, pair: readonly [number, number]): [number, number] {
  if (!Array.isArray(pair) || pair.length !== 2) {
    throw new ClinicalInputError(field, 'must hold exactly two positions, one either side');
  }
  const a = requireAngleDeg(`${field}[0]`, pair[0]);
  const b = requireAngleDeg(`${field}[1]`, pair[1]);
  if (a === b) {
    throw new ClinicalInputError(
      field,
      `the two positions must differ to bound a region (both ${a}°)`,
    );
  }
  return a < b ? [a, b] : [b, a];
}

export function suppressionScotomaRegion(readings: ScotomaReadings): ScotomaRegion {
  if (readings.eye !== 'right' && readings.eye !== 'left') {
    throw new ClinicalInputError('eye', `must be 'right' or 'left' (got ${String(readings.eye)})`);
  }
  const fx = requireAngleDeg('objectiveHorizontalDeg', readings.objectiveHorizontalDeg);
  const fy = requireAngleDeg('objectiveVerticalDeg', readings.objectiveVerticalDeg ?? 0);
  const [hLo, hHi] = orderedPair('horizontalLostDeg', readings.horizontalLostDeg);
  const xMinDeg = hLo - fx;
  const xMaxDeg = hHi - fx;
  const widthDeg = xMaxDeg - xMinDeg;

  const vertical = readings.verticalLostDeg
    ? orderedPair('verticalLostDeg', readings.verticalLostDeg)
    : null;
  const yMinDeg = vertical ? vertical[0] - fy : null;
  const yMaxDeg = vertical ? vertical[1] - fy : null;
  const heightDeg = yMinDeg !== null && yMaxDeg !== null ? yMaxDeg - yMinDeg : null;

  const coversHorizontally = xMinDeg <= 0 && xMaxDeg >= 0;
  const coversVertically =
    yMinDeg === null || yMaxDeg === null ? null : yMinDeg <= 0 && yMaxDeg >= 0;
  const cx = (xMinDeg + xMaxDeg) / 2;

  let ellipse: ScotomaRegion['svg']['ellipse'] = null;
  let rect: ScotomaRegion['svg']['rect'] = null;
  if (yMinDeg !== null && yMaxDeg !== null && heightDeg !== null) {
    // SVG's y axis points down, so "up" on the scale is negative y on the map.
    ellipse = { cx, cy: -(yMinDeg + yMaxDeg) / 2, rx: widthDeg / 2, ry: heightDeg / 2 };
    rect = { x: xMinDeg, y: -yMaxDeg, width: widthDeg, height: heightDeg };
  }

  return {
    eye: readings.eye,
    xMinDeg,
    xMaxDeg,
    yMinDeg,
    yMaxDeg,
    widthDeg,
    heightDeg,
    verticalRecorded: vertical !== null,
    coversFovea: coversHorizontally ? coversVertically : false,
    svg: { ellipse, rect, span: { x1: xMinDeg, x2: xMaxDeg, y: 0 } },
  };
}
