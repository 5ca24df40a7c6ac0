// Big single-choice buttons built on native radio inputs, so arrow keys, screen readers and
// forms behave as the platform does. TriStateChoice, EyeChoice and YesNoChoice are built on it.
import { useId } from 'react';
import './controls.css';

export interface ChoiceOption<V extends string> {
  value: V;
  label: string;
}

export interface ChoiceGroupProps<V extends string> {
  label: string;
  options: readonly ChoiceOption<V>[];
  value: V | null;
  onChange: (value: V | null) => void;
  /** Show a Clear button that sets the field back to not recorded. */
  clearable?: boolean;
  disabled?: boolean;
  hint?: string;
}

export function ChoiceGroup<V extends string>({
  label,
  options,
  value,
  onChange,
  clearable = true,
  disabled = false,
  hint,
}: ChoiceGroupProps<V>) {
  const name = useId();
  const hintId = `${name}-hint`;
  return (
    <fieldset
      className="fl-choice"
      disabled={disabled}
      aria-describedby={hint ? hintId : undefined}
    >
      <legend className="fl-choice__legend">{label}</legend>
      {hint ? (
        <p id={hintId} className="fl-muted" style={{ margin: 0 }}>
          {hint}
        </p>
      ) : null}
      <div className="fl-choice__options">
        {options.map((option) => (
          <label key={option.value} className="fl-touch fl-choice__option">
            <input
              type="radio"
              name={name}
              value={option.value}
              checked={value === option.value}
              onChange={() => onChange(option.value)}
            />
            <span>{option.label}</span>
          </label>
        ))}
        {clearable ? (
          <button
            type="button"
            className="fl-touch fl-button fl-button--quiet"
            disabled={disabled || value === null}
            aria-label={`Clear ${label}`}
            onClick={() => onChange(null)}
          >
            Clear
          </button>
        ) : null}
      </div>
    </fieldset>
  );
}
