// Touch on the deck of readings: tapping a reading's own step button changes that reading at
// once, as each reading's own stepper did before the keys; counted here tap by tap.
import { cleanup, render, screen } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { useState } from 'react';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { StatefulAngleControl } from '../../components/controls/angle-control.fixture';
import { type DeckCell, MeasureDeck } from './MeasureDeck';

afterEach(cleanup);

const base: Omit<DeckCell, 'field' | 'label' | 'value'> = {
  axis: 'vertical',
  unit: 'pd',
  min: -30,
  max: 30,
  defaultSign: 1,
};

function Deck({ onChange }: { onChange: (field: string, value: number | null) => void }) {
  const [values, setValues] = useState<Record<string, number | null>>({ a: null, b: null });
  const cells: DeckCell[] = [
    { ...base, field: 'a', label: 'Right up break', value: values.a ?? null },
    { ...base, field: 'b', label: 'Right up recovery', value: values.b ?? null },
  ];
  return (
    <MeasureDeck
      title="Readings"
      cells={cells}
      onChange={(field, value) => {
        setValues((v) => ({ ...v, [field]: value }));
        onChange(field, value);
      }}
    />
  );
}

describe('the deck of readings by touch', () => {
  it('records 3Δ on the second reading in 3 taps, the same as its own stepper took before', async () => {
    const user = userEvent.setup();
    const onChange = vi.fn();
    render(<Deck onChange={onChange} />);
    let taps = 0;
    for (let i = 0; i < 3; i += 1) {
      await user.click(screen.getByRole('button', { name: '+1Δ more, Right up recovery' }));
      taps += 1;
    }
    expect(onChange).toHaveBeenLastCalledWith('b', 3);
    expect(onChange).not.toHaveBeenCalledWith('a', expect.anything());
    expect(
      screen.getByRole('button', { name: /^Right up recovery: .*3/ }).getAttribute('aria-pressed'),
    ).toBe('true');

    // The path before the keys: the reading's own stepper, +1Δ three times.
    cleanup();
    const old = vi.fn();
    render(
      <StatefulAngleControl
        label="Right up recovery"
        axis="vertical"
        unit="pd"
        min={-30}
        max={30}
        onChange={old}
      />,
    );
    let oldTaps = 0;
    for (let i = 0; i < 3; i += 1) {
      await user.click(screen.getByRole('button', { name: /^\+1Δ more/ }));
      oldTaps += 1;
    }
    expect(old).toHaveBeenLastCalledWith(3);
    expect(taps).toBe(oldTaps);
  });

  it('makes the tapped reading the current one for the keys', async () => {
    const user = userEvent.setup();
    render(<Deck onChange={vi.fn()} />);
    await user.click(screen.getByRole('button', { name: '+1Δ more, Right up recovery' }));
    expect(
      screen.getByRole('button', { name: /^Right up recovery: / }).getAttribute('aria-pressed'),
    ).toBe('true');
    expect(screen.getByTestId('angle-value').textContent).toContain('1');
  });
});
