// Visual acuity in logMAR (docs/clinical-reference.md, "Visual acuity"): logMAR = −log10(decimal),
// decimal = Snellen numerator ÷ denominator, one chart line = 0.1 log unit; ETDRS letters
// logMAR = 1.7 − 0.02·letters; averages are taken in logMAR (Holladay, J Cataract Refract Surg
// 2004). Equivalents follow DICOM PS3.17 Annex RR (e.g. 1.0 = 20/20 = 6/6 = 0.0).
import { ClinicalInputError } from './clinical-input.error';
import { requireFinite, requireNonNegativeInteger, requireRange } from './validate';

/** Bounds beyond any chart reading; outside them an entry is a typing error, not an acuity. */
export const LOGMAR_MIN = -1;
export const LOGMAR_MAX = 3;
export const ETDRS_MAX_LETTERS = 100;

export type AcuityNotation =
  'snellen metric' | 'snellen imperial' | 'decimal' | 'letters' | 'logMAR';

function requireLogMAR(field: string, logMAR: number): number {
  return requireRange(field, logMAR, LOGMAR_MIN, LOGMAR_MAX);
}

export function decimalToLogMAR(decimal: number): number {
  requireFinite('decimal', decimal);
  if (decimal <= 0)
    throw new ClinicalInputError('decimal', `must be greater than zero (got ${decimal})`);
  const logMAR = -Math.log10(decimal);
  if (logMAR < LOGMAR_MIN || logMAR > LOGMAR_MAX) {
    throw new ClinicalInputError(
      'decimal',
      `must lie between ${10 ** -LOGMAR_MAX} and ${10 ** -LOGMAR_MIN} (got ${decimal})`,
    );
  }
  return logMAR;
}

export function logMARToDecimal(logMAR: number): number {
  requireLogMAR('logMAR', logMAR);
  return 10 ** -logMAR;
}

export function lettersToLogMAR(letters: number): number {
  requireNonNegativeInteger('letters', letters);
  requireRange('letters', letters, 0, ETDRS_MAX_LETTERS);
  return 1.7 - 0.02 * letters;
}

/** Nearest whole ETDRS letter score; logMAR beyond the letter scale throws. */
export function logMARToLetters(logMAR: number): number {
  requireLogMAR('logMAR', logMAR);
  const letters = Math.round((1.7 - logMAR) / 0.02);
  if (letters < 0 || letters > ETDRS_MAX_LETTERS) {
    throw new ClinicalInputError(
      'logMAR',
      `is outside the ETDRS letter scale (−0.3 to 1.7) (got ${logMAR})`,
    );
  }
  return letters;
}

const SNELLEN_PATTERN = /^\s*(\d+(?:\.\d+)?)\s*\/\s*(\d+(?:\.\d+)?)\s*$/;

export interface ParsedSnellen {
  numerator: number;
  denominator: number;
  notation: 'snellen metric' | 'snellen imperial';
  logMAR: number;
}

export function parseSnellen(entry: string): ParsedSnellen {
  const match = typeof entry === 'string' ? SNELLEN_PATTERN.exec(entry) : null;
  if (!match) {
    throw new ClinicalInputError(
      'snellen',
      `must be a fraction such as 6/12 or 20/40 (got ${JSON.stringify(entry)})`,
    );
  }
  const numerator = Number(match[1]);
  const denominator = Number(match[2]);
  if (numerator <= 0 || denominator <= 0) {
    throw new ClinicalInputError('snellen', `needs both parts above zero (got ${entry})`);
  }
  const logMAR = -Math.log10(numerator / denominator);
  requireLogMAR('snellen', logMAR);
  // The ratio is unit-free; the notation only records how it was written (20 = feet).
  const notation = numerator === 20 ? 'snellen imperial' : 'snellen metric';
  return { numerator, denominator, notation, logMAR };
}

export function snellenToLogMAR(snellen: string): number {
  return parseSnellen(snellen).logMAR;
}

/**
 * Chart lines from −0.3 to 1.7 logMAR, one per 0.1 log unit, with the denominators printed on
 * charts (common practice: the preferred-number series, e.g. 20/32 and 6/9.5 for 0.2).
 */
const CHART_LINES: readonly { logMAR: number; metric: string; imperial: string }[] = [
  [-0.3, '3', '10'],
  [-0.2, '3.8', '12.5'],
  [-0.1, '4.8', '16'],
  [0, '6', '20'],
  [0.1, '7.5', '25'],
  [0.2, '9.5', '32'],
  [0.3, '12', '40'],
  [0.4, '15', '50'],
  [0.5, '19', '63'],
  [0.6, '24', '80'],
  [0.7, '30', '100'],
  [0.8, '38', '125'],
  [0.9, '48', '160'],
  [1.0, '60', '200'],
  [1.1, '75', '250'],
  [1.2, '95', '320'],
  [1.3, '120', '400'],
  [1.4, '150', '500'],
  [1.5, '190', '630'],
  [1.6, '240', '800'],
  [1.7, '300', '1000'],
].map(([logMAR, metric, imperial]) => ({
  logMAR: Number(logMAR),
  metric: `6/${String(metric)}`,
  imperial: `20/${String(imperial)}`,
}));

export type SnellenChart = '6 m' | '20 ft';

export interface SnellenLine {
  /** e.g. "6/12"; "better than 6/3" or "worse than 6/300" off the chart. */
  label: string;
  /** The nominal logMAR of the line, or null when off the chart. */
  lineLogMAR: number | null;
  exactLogMAR: number;
  onChart: boolean;
}

export function nearestSnellenLine(logMAR: number, chart: SnellenChart): SnellenLine {
  requireLogMAR('logMAR', logMAR);
  const pick = (line: { metric: string; imperial: string }): string =>
    chart === '6 m' ? line.metric : line.imperial;
  const first = CHART_LINES[0];
  const last = CHART_LINES[CHART_LINES.length - 1];
  if (!first || !last) throw new Error('chart line table is empty');
  const half = 0.05 + 1e-9;
  if (logMAR < first.logMAR - half) {
    return {
      label: `better than ${pick(first)}`,
      lineLogMAR: null,
      exactLogMAR: logMAR,
      onChart: false,
    };
  }
  if (logMAR > last.logMAR + half) {
    return {
      label: `worse than ${pick(last)}`,
      lineLogMAR: null,
      exactLogMAR: logMAR,
      onChart: false,
    };
  }
  let best = first;
  for (const line of CHART_LINES) {
    if (Math.abs(line.logMAR - logMAR) < Math.abs(best.logMAR - logMAR) - 1e-12) best = line;
  }
  return { label: pick(best), lineLogMAR: best.logMAR, exactLogMAR: logMAR, onChart: true };
}

/** Nominal chart-line logMAR (20/25 → 0.1), as opposed to the exact value (0.097). */
export function nominalLineLogMAR(logMAR: number): number {
  requireLogMAR('logMAR', logMAR);
  return Math.round(logMAR * 10) / 10;
}

/** Mean acuity, averaged in logMAR as acuities must be (Holladay 2004). */
export function meanLogMAR(values: readonly number[]): number {
  if (values.length === 0) throw new ClinicalInputError('values', 'needs at least one acuity');
  values.forEach((v, i) => requireLogMAR(`values[${i}]`, v));
  return values.reduce((sum, v) => sum + v, 0) / values.length;
}

export interface ParsedAcuity {
  logMAR: number;
  notation: AcuityNotation;
  entry: string;
}

const LETTERS_PATTERN = /^\s*(\d+)\s*(?:letters?|l)\s*$/i;
const LOGMAR_PATTERN = /^\s*(-?\d+(?:\.\d+)?)\s*logmar\s*$|^\s*logmar\s*(-?\d+(?:\.\d+)?)\s*$/i;
const DECIMAL_PATTERN = /^\s*(\d*\.?\d+)\s*$/;

/**
 * One entry box for every notation: "6/12", "20/40", "0.5" (decimal), "70 letters" / "70L"
 * (ETDRS), "0.3 logMAR". A bare number is read as decimal acuity; letters and logMAR must say so,
 * since "70" or "0.3" alone would be ambiguous.
 */
export function parseAcuity(entry: string): ParsedAcuity {
  if (typeof entry !== 'string' || entry.trim() === '') {
    throw new ClinicalInputError('acuity', 'is empty');
  }
  if (entry.includes('/')) {
    const { logMAR, notation } = parseSnellen(entry);
    return { logMAR, notation, entry };
  }
  const letters = LETTERS_PATTERN.exec(entry);
  if (letters) return { logMAR: lettersToLogMAR(Number(letters[1])), notation: 'letters', entry };
  const log = LOGMAR_PATTERN.exec(entry);
  if (log) {
    const logMAR = Number(log[1] ?? log[2]);
    requireLogMAR('acuity', logMAR);
    return { logMAR, notation: 'logMAR', entry };
  }
  const decimal = DECIMAL_PATTERN.exec(entry);
  if (decimal) return { logMAR: decimalToLogMAR(Number(decimal[1])), notation: 'decimal', entry };
  throw new ClinicalInputError(
    'acuity',
    `is not Snellen (6/12, 20/40), decimal (0.5), letters (70 letters) or logMAR (0.3 logMAR) (got ${JSON.stringify(entry)})`,
  );
}
