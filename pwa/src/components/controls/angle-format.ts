// How an amblyoscope reading is put into words on screen: the trade's sign words for each axis
// and the other unit by the clinic's chosen conversion. The conversion itself is the shared
// clinical module's (Δ = 100·tan θ, or the 2Δ-per-degree rule of thumb); this file only formats.
import {
  type ConversionMethod,
  ClinicalInputError,
  RULE_OF_THUMB_LIMIT_DEG,
  convertDegreesToPrism,
  convertPrismToDegrees,
  prismDioptresToDegrees,
} from '@fuselight/shared';

export type AngleAxis = 'horizontal' | 'vertical' | 'torsion';
export type AngleUnit = 'deg' | 'pd';

export interface SignWords {
  /** Short word on the toggle, e.g. "eso". */
  short: string;
  /** What a screen reader says, e.g. "eso, convergent". */
  spoken: string;
}

/** Stored signs (docs/clinical-reference.md): + eso / R/L / excyclo, − exo / L/R / incyclo. */
export const SIGN_WORDS: Record<AngleAxis, { positive: SignWords; negative: SignWords }> = {
  horizontal: {
    positive: { short: 'eso', spoken: 'eso, convergent' },
    negative: { short: 'exo', spoken: 'exo, divergent' },
  },
  vertical: {
    positive: { short: 'R/L', spoken: 'R over L, right eye higher' },
    negative: { short: 'L/R', spoken: 'L over R, left eye higher' },
  },
  torsion: {
    positive: { short: 'excyclo', spoken: 'excyclo' },
    negative: { short: 'incyclo', spoken: 'incyclo' },
  },
};

export const UNIT_SYMBOL: Record<AngleUnit, '°' | 'Δ'> = { deg: '°', pd: 'Δ' };
const UNIT_SPOKEN: Record<AngleUnit, string> = { deg: 'degrees', pd: 'prism dioptres' };

/** One decimal place; never "-0.0". */
export function oneDecimal(value: number): string {
  const rounded = Math.round(value * 10) / 10;
  return (Object.is(rounded, -0) ? 0 : rounded).toFixed(1);
}

/** "eso 12.0°", "L/R 3.0Δ", "0.0°" */
type Words = AngleAxis | { positive: SignWords; negative: SignWords };
const wordsOf = (axis: Words) => (typeof axis === 'string' ? SIGN_WORDS[axis] : axis);

export function describeReading(axis: Words, unit: AngleUnit, value: number): string {
  const magnitude = `${oneDecimal(Math.abs(value))}${UNIT_SYMBOL[unit]}`;
  if (value === 0) return magnitude;
  const words = value > 0 ? wordsOf(axis).positive : wordsOf(axis).negative;
  return `${words.short} ${magnitude}`;
}

export function spokenReading(axis: Words, unit: AngleUnit, value: number): string {
  const magnitude = `${oneDecimal(Math.abs(value))} ${UNIT_SPOKEN[unit]}`;
  if (value === 0) return `zero ${UNIT_SPOKEN[unit]}`;
  const words = value > 0 ? wordsOf(axis).positive : wordsOf(axis).negative;
  return `${words.spoken} ${magnitude}`;
}

export interface OtherUnitReading {
  /** Magnitude in the other unit, e.g. "21.1Δ". */
  text: string;
  method: ConversionMethod;
  /** "exact" or "rule of thumb", plus why the exact one was used when the rule was asked for. */
  methodLabel: string;
  spoken: string;
}

/**
 * The reading in the other unit, labelled with the method used. The rule of thumb is only stated
 * below 45°, so beyond it the exact conversion is shown and the label says so.
 */
export function otherUnitReading(
  unit: AngleUnit,
  value: number,
  method: ConversionMethod,
): OtherUnitReading | null {
  try {
    return convertReading(unit, value, method);
  } catch (error) {
    // At ±90° tan θ has no finite value: there is no prism equivalent to show.
    if (error instanceof ClinicalInputError) return null;
    throw error;
  }
}

function convertReading(
  unit: AngleUnit,
  value: number,
  method: ConversionMethod,
): OtherUnitReading {
  const degrees = unit === 'deg' ? value : prismDioptresToDegrees(value);
  const usable: ConversionMethod =
    method === 'rule of thumb' && Math.abs(degrees) >= RULE_OF_THUMB_LIMIT_DEG ? 'exact' : method;
  const converted =
    unit === 'deg' ? convertDegreesToPrism(value, usable) : convertPrismToDegrees(value, usable);
  const otherUnit: AngleUnit = unit === 'deg' ? 'pd' : 'deg';
  const methodLabel =
    usable === method ? usable : `exact (rule of thumb only below ${RULE_OF_THUMB_LIMIT_DEG}°)`;
  return {
    text: `${oneDecimal(Math.abs(converted.value))}${UNIT_SYMBOL[otherUnit]}`,
    method: usable,
    methodLabel,
    spoken: `${oneDecimal(Math.abs(converted.value))} ${UNIT_SPOKEN[otherUnit]}, ${methodLabel}`,
  };
}

export type ParsedEntry = { ok: true; value: number } | { ok: false; problem: string };

const MINUS_SIGNS = /[−–—]/g;

/**
 * Reads a typed value: "12.5", "-4", "−4", "+3", or with the trade's words ("exo 4", "4 exo",
 * "R/L 2"). An explicit sign or word wins; a bare number takes the direction chosen on the toggle.
 */
export function parseTypedReading(axis: Words, typed: string, chosenSign: 1 | -1): ParsedEntry {
  let text = typed.trim().toLowerCase().replace(MINUS_SIGNS, '-').replace(',', '.');
  text = text.replace(/[°δ]|deg(rees?)?|pd/g, '').trim();
  if (text === '') return { ok: false, problem: 'is empty; type a number such as 12.5' };
  let sign: 1 | -1 | null = null;
  const { positive, negative } = wordsOf(axis);
  for (const [words, s] of [
    [negative, -1],
    [positive, 1],
  ] as const) {
    const word = words.short.toLowerCase();
    if (text.startsWith(word) || text.endsWith(word)) {
      sign = s;
      text = text.replace(word, '').trim();
      break;
    }
  }
  if (!/^[+-]?(\d+(\.\d*)?|\.\d+)$/.test(text)) {
    return {
      ok: false,
      problem: `“${typed.trim()}” is not a number; type a number such as 12.5 or −4`,
    };
  }
  const number = Number(text);
  const explicit = text.startsWith('-') ? -1 : text.startsWith('+') ? 1 : null;
  if (sign !== null && explicit === -1) {
    return {
      ok: false,
      problem: `“${typed.trim()}” has both a minus sign and the word ${positive.short}/${negative.short}; use one`,
    };
  }
  const magnitude = Math.abs(number);
  const finalSign = sign ?? explicit ?? chosenSign;
  return { ok: true, value: finalSign * magnitude };
}
