// A large stepper for amblyoscope angles and scale positions, made for a gloved hand that is
// also on the dials: big step buttons, a sign toggle in the trade's words, typed entry and undo.
// It holds no clinical rules; conversions come from @fuselight/shared through angle-format.
import { type ConversionMethod, describeRange } from '@fuselight/shared';
import { type KeyboardEvent, useContext, useId, useRef, useState } from 'react';
import {
  type AngleAxis,
  type AngleUnit,
  SIGN_WORDS,
  type SignWords,
  UNIT_SYMBOL,
  describeReading,
  otherUnitReading,
  parseTypedReading,
  spokenReading,
} from './angle-format';
import { useBenchAction } from './bench-action';
import { ConversionContext } from './conversion-context';
import './controls.css';

export interface AngleControlProps {
  /** The field's label in the trade's words, e.g. "Objective horizontal angle". */
  label: string;
  /** Which sign words to use: eso/exo, R/L and L/R, incyclo/excyclo. */
  axis: AngleAxis;
  /** The stored value's unit (horizontal and torsion in degrees, vertical in Δ). */
  unit: AngleUnit;
  /** Signed stored value (+ eso / R/L / excyclo), null when not recorded. */
  value: number | null;
  onChange: (value: number | null) => void;
  min: number;
  max: number;
  /** How the other unit is worked out; defaults to the clinic setting (ConversionContext). */
  conversion?: ConversionMethod;
  /** Step sizes for the buttons; the trade's defaults are 0.5, 1 and 5. */
  steps?: readonly [number, number, number];
  /** Direction a first step goes in when nothing is recorded yet. */
  defaultSign?: 1 | -1;
  /** Other sign words where the axis's own do not fit, e.g. up / down on a vertical control. */
  signWords?: { positive: SignWords; negative: SignWords };
  /** Extra words under the label, e.g. "measured from the subjective angle". */
  hint?: string;
  disabled?: boolean;
}

const round = (value: number): number => Math.round(value * 100) / 100;

export function AngleControl({
  label,
  axis,
  unit,
  value,
  onChange,
  min,
  max,
  conversion,
  steps = [0.5, 1, 5],
  defaultSign = 1,
  hint,
  signWords,
  disabled = false,
}: AngleControlProps) {
  const clinicConversion = useContext(ConversionContext);
  const method = conversion ?? clinicConversion;
  const baseId = useId();
  const [chosenSign, setChosenSign] = useState<1 | -1>(defaultSign);
  const [typed, setTyped] = useState('');
  const [entryError, setEntryError] = useState<string | null>(null);
  // Earlier values this control set, newest last, so Undo can step back through them.
  const [history, setHistory] = useState<readonly (number | null)[]>([]);

  const signed = min < 0 && max > 0;
  // The sign shown follows the value when there is one; at zero or nothing it is the last choice.
  const sign: 1 | -1 = !signed
    ? min < 0
      ? -1
      : 1
    : value !== null && value !== 0
      ? value > 0
        ? 1
        : -1
      : chosenSign;
  const limit = sign > 0 ? max : -min;
  const magnitude = value === null ? 0 : Math.abs(value);
  const words = signWords ?? SIGN_WORDS[axis];
  const showOtherUnit = axis !== 'torsion';

  const commit = (next: number | null) => {
    if (next === value) return;
    setHistory((earlier) => [...earlier, value]);
    onChange(next);
  };

  const step = (delta: number): number => {
    const nextMagnitude = Math.min(limit, Math.max(0, round(magnitude + delta)));
    commit(sign * nextMagnitude);
    return sign * nextMagnitude;
  };

  /** Sets the sign; returns the refusal in words when the value would leave the scale. */
  const chooseSign = (next: 1 | -1): string | null => {
    setChosenSign(next);
    if (value !== null && value !== 0 && Math.sign(value) !== next) {
      const flipped = -value;
      if (flipped < min || flipped > max) {
        const problem = `${label}: ${describeReading(words, unit, flipped)} is outside the scale; it must be ${describeRange(min, max, UNIT_SYMBOL[unit], { signed: true })}`;
        setEntryError(problem);
        return problem;
      }
      commit(flipped);
    }
    return null;
  };

  const undo = () => {
    if (history.length === 0) return;
    const previous = history[history.length - 1] ?? null;
    setHistory(history.slice(0, -1));
    setEntryError(null);
    onChange(previous);
  };

  const submitTyped = () => {
    const parsed = parseTypedReading(words, typed, sign);
    if (!parsed.ok) {
      setEntryError(`${label}: ${parsed.problem}.`);
      return;
    }
    if (parsed.value < min || parsed.value > max) {
      setEntryError(
        `${label} must be ${describeRange(min, max, UNIT_SYMBOL[unit], { signed: signed })} (you typed ${typed.trim()}).`,
      );
      return;
    }
    setEntryError(null);
    setTyped('');
    if (parsed.value !== 0) setChosenSign(parsed.value > 0 ? 1 : -1);
    commit(parsed.value);
  };

  // Keys of the Bench (foot pedal, clicker, keypad) reach the control as actions.
  const readoutRef = useRef<HTMLDivElement>(null);
  useBenchAction(readoutRef, (action) => {
    if (disabled) return undefined;
    const [small, medium, large] = steps;
    const deltas: Record<string, number> = {
      stepUpSmall: small,
      stepDownSmall: -small,
      stepUpMedium: medium,
      stepDownMedium: -medium,
      stepUpLarge: large,
      stepDownLarge: -large,
    };
    const delta = deltas[action];
    if (delta !== undefined) {
      const next = step(delta);
      return `${label}: ${spokenReading(words, unit, next)}`;
    }
    if (action === 'toggleSign' && signed) {
      const next = sign > 0 ? -1 : 1;
      const refused = chooseSign(next);
      if (refused) return refused;
      const shown = value !== null && value !== 0 ? -value : 0;
      return value !== null && value !== 0
        ? `${label}: ${spokenReading(words, unit, shown)}`
        : `${label}: ${(next > 0 ? words.positive : words.negative).spoken}`;
    }
    return undefined;
  });

  const onReadoutKey = (event: KeyboardEvent<HTMLDivElement>) => {
    if (disabled) return;
    const [small, medium, large] = steps;
    const keyed: Record<string, () => void> = {
      ArrowUp: () => step(event.shiftKey ? large : medium),
      ArrowDown: () => step(-(event.shiftKey ? large : medium)),
      ArrowRight: () => step(small),
      ArrowLeft: () => step(-small),
      PageUp: () => step(large),
      PageDown: () => step(-large),
      '+': () => step(medium),
      '=': () => step(medium),
      '-': () => step(-medium),
      Home: () => commit(0),
      Delete: () => commit(null),
      Backspace: () => commit(null),
    };
    if ((event.ctrlKey || event.metaKey) && event.key.toLowerCase() === 'z') {
      event.preventDefault();
      undo();
      return;
    }
    const action = keyed[event.key];
    if (action) {
      event.preventDefault();
      action();
    }
  };

  const other = value !== null && showOtherUnit ? otherUnitReading(unit, value, method) : null;
  const valueText =
    value === null
      ? 'not recorded'
      : `${spokenReading(words, unit, value)}${other ? `, ${other.spoken}` : ''}`;
  const previous = history[history.length - 1];
  const previousText =
    previous === undefined
      ? ''
      : previous === null
        ? 'not recorded'
        : describeReading(words, unit, previous);
  const errorId = `${baseId}-error`;
  const hintId = `${baseId}-hint`;
  const labelId = `${baseId}-label`;
  const symbol = UNIT_SYMBOL[unit];

  return (
    <div
      className="fl-angle"
      role="group"
      aria-labelledby={labelId}
      aria-describedby={hint ? hintId : undefined}
    >
      <div className="fl-angle__head">
        <span id={labelId} className="fl-angle__label">
          {label}
        </span>
        {hint ? (
          <span id={hintId} className="fl-muted fl-angle__hint">
            {hint}
          </span>
        ) : null}
      </div>

      <div className="fl-angle__body">
        {signed ? (
          <div className="fl-segmented" role="group" aria-label={`${label}: direction`}>
            {([1, -1] as const).map((s) => {
              const w = s > 0 ? words.positive : words.negative;
              return (
                <button
                  key={s}
                  type="button"
                  className="fl-touch fl-segmented__option"
                  aria-pressed={sign === s}
                  aria-label={w.spoken}
                  disabled={disabled}
                  onClick={() => chooseSign(s)}
                >
                  {w.short}
                </button>
              );
            })}
          </div>
        ) : null}

        <div
          className="fl-angle__readout"
          role="spinbutton"
          ref={readoutRef}
          tabIndex={disabled ? -1 : 0}
          aria-labelledby={labelId}
          aria-valuenow={value === null ? undefined : magnitude}
          aria-valuemin={0}
          aria-valuemax={limit}
          aria-valuetext={valueText}
          aria-disabled={disabled || undefined}
          aria-invalid={entryError !== null || undefined}
          aria-errormessage={entryError ? errorId : undefined}
          onKeyDown={onReadoutKey}
        >
          <span className="fl-angle__value" data-testid="angle-value">
            {value === null ? '—' : describeReading(words, unit, value)}
          </span>
          {other ? (
            <span className="fl-angle__other" data-testid="angle-other-unit">
              {other.text} <span className="fl-angle__method">{other.methodLabel}</span>
            </span>
          ) : (
            <span className="fl-angle__other fl-muted">
              {value === null
                ? 'not recorded'
                : showOtherUnit
                  ? 'no finite prism equivalent at this angle'
                  : 'no prism equivalent for torsion'}
            </span>
          )}
        </div>
      </div>

      <div className="fl-angle__steps">
        {[...steps].reverse().map((size) => (
          <button
            key={`minus-${size}`}
            type="button"
            className="fl-touch fl-step"
            aria-label={`−${size}${symbol} less`}
            disabled={disabled || magnitude === 0}
            onClick={() => step(-size)}
          >
            −{size}
            {symbol}
          </button>
        ))}
        {steps.map((size) => (
          <button
            key={`plus-${size}`}
            type="button"
            className="fl-touch fl-step fl-step--more"
            aria-label={`+${size}${symbol} more${signed ? ` ${(sign > 0 ? words.positive : words.negative).short}` : ''}`}
            disabled={disabled || magnitude >= limit}
            onClick={() => step(size)}
          >
            +{size}
            {symbol}
          </button>
        ))}
      </div>

      <form
        className="fl-angle__entry"
        onSubmit={(event) => {
          event.preventDefault();
          submitTyped();
        }}
      >
        <label className="fl-angle__entry-label">
          <span className="fl-visually-hidden">Type {label}</span>
          <input
            className="fl-touch fl-input"
            type="text"
            inputMode="decimal"
            autoComplete="off"
            placeholder={`Type, e.g. ${signed ? `${words.negative.short} 4 or −4` : '12'}`}
            value={typed}
            disabled={disabled}
            aria-invalid={entryError !== null || undefined}
            aria-describedby={entryError ? errorId : undefined}
            onChange={(event) => {
              setTyped(event.target.value);
            }}
          />
        </label>
        <button type="submit" className="fl-touch fl-button" disabled={disabled}>
          Set
        </button>
        <button
          type="button"
          className="fl-touch fl-button fl-button--quiet"
          disabled={disabled || history.length === 0}
          aria-label={
            history.length === 0 ? 'Undo last entry' : `Undo last entry (back to ${previousText})`
          }
          onClick={undo}
        >
          Undo
        </button>
        <button
          type="button"
          className="fl-touch fl-button fl-button--quiet"
          disabled={disabled || value === null}
          aria-label={`Clear ${label}`}
          onClick={() => commit(null)}
        >
          Clear
        </button>
      </form>
      {entryError ? (
        <p id={errorId} className="fl-field-error" role="alert">
          {entryError}
        </p>
      ) : null}
    </div>
  );
}
