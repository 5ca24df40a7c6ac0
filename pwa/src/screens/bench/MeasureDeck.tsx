// A step's angle readings as one list of values and one large stepper for the reading chosen,
// so a step with many readings (the scotoma's four, the fusional ranges' twelve) fits one tablet
// screen. The stepper starts a reading from where the measurement starts (the objective or the
// subjective angle), shown as not recorded until it is stepped or marked. Marks ("picture lost",
// "break", "recovery") record the value on the stepper as that finding and move to the next one.
import type { ReactNode } from 'react';
import { useLayoutEffect, useRef, useState } from 'react';
import {
  AngleControl,
  type AngleAxis,
  type AngleUnit,
  type SignWords,
} from '../../components/controls';
import { describeReading, spokenReading } from '../../components/controls/angle-format';
import { useBenchAction } from '../../components/controls/bench-action';

export type DeckMark = 'markLost' | 'markBreak' | 'markRecovery';

export interface DeckCell {
  field: string;
  /** The reading's name in the trade's words, e.g. "Divergence break". */
  label: string;
  /** The column's word in a grouped list, e.g. "Break". */
  short?: string;
  group?: string;
  axis: AngleAxis;
  unit: AngleUnit;
  min: number;
  max: number;
  defaultSign?: 1 | -1;
  signWords?: { positive: SignWords; negative: SignWords };
  hint?: string;
  value: number | null;
  /** Where the reading starts while nothing is recorded; saved only once stepped or marked. */
  start?: number | null;
  /** Which mark records this reading. */
  mark?: DeckMark;
}

const MARK_WORDS: Record<DeckMark, string> = {
  markLost: 'Picture lost here',
  markBreak: 'Break here',
  markRecovery: 'Recovery here',
};

export function MeasureDeck({
  title,
  cells,
  onChange,
  children,
  aside,
}: {
  /** What the list of readings is, for screen readers ("Scotoma readings"). */
  title: string;
  cells: readonly DeckCell[];
  onChange: (field: string, value: number | null) => void;
  /** Shown under the stepper (live summaries, results). */
  children?: ReactNode;
  /**
   * Shown beside the stepper in its own place (under the list of readings, or a column of its
   * own), for a result too large to sit under the stepper on one screen.
   */
  aside?: ReactNode;
}) {
  const [selectedField, setSelectedField] = useState(cells[0]?.field ?? '');
  const [carry, setCarry] = useState<{ field: string; value: number } | null>(null);
  const [focusEditor, setFocusEditor] = useState(0);
  const root = useRef<HTMLDivElement>(null);
  const index = Math.max(
    0,
    cells.findIndex((c) => c.field === selectedField),
  );
  const selected = cells[index]!;
  const running =
    selected.value ??
    (carry?.field === selected.field ? carry.value : null) ??
    selected.start ??
    null;

  // A key moved to another reading: the stepper that now shows it takes the focus.
  useLayoutEffect(() => {
    if (focusEditor > 0) root.current?.querySelector<HTMLElement>('.fl-angle__readout')?.focus();
  }, [focusEditor]);

  const select = (cell: DeckCell, carried: number | null = null, focus = false) => {
    setSelectedField(cell.field);
    setCarry(carried === null ? null : { field: cell.field, value: carried });
    if (focus) setFocusEditor((n) => n + 1);
  };

  const words = (cell: DeckCell) => cell.signWords ?? cell.axis;

  const mark = (kind: DeckMark): string | undefined => {
    const group = cells.filter((c) => (c.group ?? null) === (selected.group ?? null));
    const into = selected.mark === kind ? selected : group.find((c) => c.mark === kind);
    if (!into) return undefined;
    if (running === null) {
      return `Nothing to mark: step ${selected.label.toLowerCase()} to where it happens first`;
    }
    if (running !== into.value) onChange(into.field, running);
    const said = `${into.label} marked at ${spokenReading(words(into), into.unit, running)}`;
    const at = cells.indexOf(into);
    let next: DeckCell | undefined;
    let carried: number | null = null;
    if (kind === 'markBreak') {
      next = group.find((c) => c.mark === 'markRecovery');
      carried = running;
    } else if (kind === 'markRecovery') {
      next = cells.slice(at + 1).find((c) => c.group !== into.group);
    } else {
      next = cells.slice(at + 1).find((c) => c.value === null) ?? cells[at + 1];
    }
    if (!next) return `${said}. That was the last reading of the step`;
    select(next, next.value === null ? carried : null, true);
    return `${said}. Now ${next.label.toLowerCase()}`;
  };

  useBenchAction(root, (action) => {
    if (action === 'nextControl' || action === 'previousControl') {
      const next = cells[index + (action === 'nextControl' ? 1 : -1)];
      if (!next) return undefined; // past the last reading: the Bench moves on
      select(next, null, true);
      return '';
    }
    if (action === 'markLost' || action === 'markBreak' || action === 'markRecovery') {
      return mark(action);
    }
    return undefined;
  });

  const groups = [...new Set(cells.map((c) => c.group ?? ''))];
  const shownValue = (cell: DeckCell) =>
    cell.value === null ? '—' : describeReading(words(cell), cell.unit, cell.value);
  // Touch acts on a reading at once: its own step buttons change it (and make it the current
  // reading for the keys), with no tap first to choose it.
  const stepCell = (cell: DeckCell, delta: number) => {
    const base =
      cell.value ?? (carry?.field === cell.field ? carry.value : null) ?? cell.start ?? null;
    const sign: 1 | -1 =
      base !== null && base !== 0
        ? base > 0
          ? 1
          : -1
        : (cell.defaultSign ?? (cell.max <= 0 ? -1 : 1));
    const limit = sign > 0 ? cell.max : -cell.min;
    const magnitude = Math.min(
      limit,
      Math.max(0, Math.round((Math.abs(base ?? 0) + delta) * 2) / 2),
    );
    if (cell.field !== selected.field) select(cell);
    else setCarry(null);
    onChange(cell.field, sign * magnitude);
  };
  const unitSymbol = (cell: DeckCell) => (cell.unit === 'pd' ? 'Δ' : '°');
  const cellButton = (cell: DeckCell) => (
    <div
      key={cell.field}
      className="fl-deck__cell-wrap"
      data-current={cell.field === selected.field || undefined}
    >
      <button
        type="button"
        className="fl-touch fl-deck__step"
        aria-label={`−1${unitSymbol(cell)} less, ${cell.label}`}
        disabled={(cell.value ?? 0) === 0 && cell.start == null}
        onClick={() => stepCell(cell, -1)}
      >
        −
      </button>
      <button
        type="button"
        className="fl-touch fl-deck__cell"
        aria-pressed={cell.field === selected.field}
        aria-label={`${cell.label}: ${cell.value === null ? 'not recorded' : shownValue(cell)}`}
        onClick={() => select(cell)}
      >
        <span className="fl-deck__cell-label">{cell.short ?? cell.label}</span>
        <span className="fl-deck__cell-value">{shownValue(cell)}</span>
      </button>
      <button
        type="button"
        className="fl-touch fl-deck__step"
        aria-label={`+1${unitSymbol(cell)} more, ${cell.label}`}
        onClick={() => stepCell(cell, 1)}
      >
        +
      </button>
    </div>
  );

  return (
    <div className="fl-deck" ref={root} data-bench-handler>
      <div className="fl-deck__cells" role="group" aria-label={title}>
        {groups.length > 1 || groups[0] !== ''
          ? groups.map((group) => (
              <div key={group} className="fl-deck__row">
                <span className="fl-deck__group">{group}</span>
                {cells.filter((c) => (c.group ?? '') === group).map(cellButton)}
              </div>
            ))
          : cells.map(cellButton)}
      </div>
      <div className="fl-deck__editor">
        <AngleControl
          key={selected.field}
          label={selected.label}
          axis={selected.axis}
          unit={selected.unit}
          min={selected.min}
          max={selected.max}
          {...(selected.defaultSign ? { defaultSign: selected.defaultSign } : {})}
          {...(selected.signWords ? { signWords: selected.signWords } : {})}
          {...(selected.hint ? { hint: selected.hint } : {})}
          value={running}
          onChange={(value) => {
            setCarry(null);
            onChange(selected.field, value);
          }}
        />
        {selected.mark ? (
          <div className="fl-deck__marks">
            {(['markLost', 'markBreak', 'markRecovery'] as const)
              .filter((kind) =>
                cells.some(
                  (c) => c.mark === kind && (c.group ?? null) === (selected.group ?? null),
                ),
              )
              .map((kind) => (
                <button
                  key={kind}
                  type="button"
                  className="fl-touch fl-button"
                  disabled={running === null}
                  onClick={() => void mark(kind)}
                >
                  {MARK_WORDS[kind]}
                </button>
              ))}
          </div>
        ) : null}
        {/* Under the marks, so its coming and going moves none of the buttons above it. */}
        {selected.value === null && running !== null ? (
          <p className="fl-muted fl-deck__start">
            Starts at {describeReading(words(selected), selected.unit, running)}: not recorded until
            you step it or mark it.
          </p>
        ) : null}
        {children}
      </div>
      {aside ? <div className="fl-deck__aside">{aside}</div> : null}
    </div>
  );
}
