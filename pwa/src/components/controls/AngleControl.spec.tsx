import { cleanup, render, screen, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { StatefulAngleControl } from './angle-control.fixture';
import { ConversionContext } from './conversion-context';

const shown = () => screen.getByTestId('angle-value').textContent;
const otherUnit = () => screen.getByTestId('angle-other-unit').textContent;
const spin = () => screen.getByRole('spinbutton', { name: 'Objective horizontal angle' });

describe('AngleControl', () => {
  afterEach(cleanup);

  it('steps by 0.5°, 1° and 5° and reports each value', async () => {
    const user = userEvent.setup();
    const onChange = vi.fn();
    render(<StatefulAngleControl onChange={onChange} />);
    expect(shown()).toBe('—');

    await user.click(screen.getByRole('button', { name: '+5° more eso' }));
    await user.click(screen.getByRole('button', { name: '+0.5° more eso' }));
    await user.click(screen.getByRole('button', { name: '+1° more eso' }));
    await user.click(screen.getByRole('button', { name: '−0.5° less' }));
    expect(onChange.mock.calls.map(([v]) => v)).toEqual([5, 5.5, 6.5, 6]);
    expect(shown()).toBe('eso 6.0°');
  });

  it('never steps past the end of the scale and disables the step that would', async () => {
    const user = userEvent.setup();
    render(<StatefulAngleControl initial={88} />);
    await user.click(screen.getByRole('button', { name: '+5° more eso' }));
    expect(shown()).toBe('eso 90.0°');
    // tan 90° is unbounded, so no Δ can be shown there.
    expect(spin().textContent).toBe('eso 90.0°no finite prism equivalent at this angle');
    expect(screen.queryByTestId('angle-other-unit')).toBeNull();
    expect(screen.getByRole('button', { name: '+0.5° more eso' })).toHaveProperty('disabled', true);
  });

  it('speaks eso and exo for a horizontal angle and flips the sign with the toggle', async () => {
    const user = userEvent.setup();
    const onChange = vi.fn();
    render(<StatefulAngleControl initial={12} onChange={onChange} />);
    expect(
      screen.getByRole('button', { name: 'eso, convergent' }).getAttribute('aria-pressed'),
    ).toEqual('true');
    await user.click(screen.getByRole('button', { name: 'exo, divergent' }));
    expect(onChange).toHaveBeenLastCalledWith(-12);
    expect(shown()).toBe('exo 12.0°');
    expect(spin().getAttribute('aria-valuetext')).toEqual(
      expect.stringMatching(/^exo, divergent 12\.0 degrees/),
    );
  });

  it('steps away from zero in the chosen direction when nothing is recorded', async () => {
    const user = userEvent.setup();
    const onChange = vi.fn();
    render(<StatefulAngleControl onChange={onChange} />);
    await user.click(screen.getByRole('button', { name: 'exo, divergent' }));
    expect(onChange).not.toHaveBeenCalled();
    await user.click(screen.getByRole('button', { name: '+1° more exo' }));
    expect(onChange).toHaveBeenLastCalledWith(-1);
  });

  it('speaks R/L and L/R for a vertical reading stored in prism dioptres', async () => {
    const user = userEvent.setup();
    render(
      <StatefulAngleControl
        label="Objective horizontal angle"
        axis="vertical"
        unit="pd"
        min={-50}
        max={50}
        initial={-10}
      />,
    );
    expect(shown()).toBe('L/R 10.0Δ');
    // 10Δ = 5.711° exactly (θ = atan(Δ/100); docs/clinical-reference.md reverse check values).
    expect(otherUnit()).toBe('5.7° exact');
    await user.click(screen.getByRole('button', { name: 'R over L, right eye higher' }));
    expect(shown()).toBe('R/L 10.0Δ');
  });

  it('speaks incyclo and excyclo for torsion and shows no prism equivalent', () => {
    render(<StatefulAngleControl axis="torsion" min={-45} max={45} initial={-3} />);
    expect(shown()).toBe('incyclo 3.0°');
    const direction = screen.getByRole('group', { name: 'Objective horizontal angle: direction' });
    expect(
      within(direction)
        .getAllByRole('button')
        .map((b) => [b.getAttribute('aria-label'), b.getAttribute('aria-pressed')]),
    ).toEqual([
      ['excyclo', 'false'],
      ['incyclo', 'true'],
    ]);
    expect(screen.queryByTestId('angle-other-unit')).toBeNull();
    expect(spin().textContent).toBe('incyclo 3.0°no prism equivalent for torsion');
  });

  it('shows prism dioptres by the exact definition, labelled exact', () => {
    // 10° = 17.633Δ and 20° = 36.397Δ (Δ = 100·tan θ; Millodot, "prism dioptre").
    const { rerender } = render(<StatefulAngleControl initial={10} />);
    expect(otherUnit()).toBe('17.6Δ exact');
    rerender(<StatefulAngleControl initial={10} key="b" conversion="exact" />);
    expect(otherUnit()).toBe('17.6Δ exact');
  });

  it('labels the rule of thumb when the clinic uses it, and falls back to exact from 45°', () => {
    // Rule of thumb 1° ≈ 2Δ (common practice), only stated below 45°.
    render(
      <ConversionContext.Provider value="rule of thumb">
        <StatefulAngleControl initial={-10} />
      </ConversionContext.Provider>,
    );
    expect(otherUnit()).toBe('20.0Δ rule of thumb');
  });

  it('uses the exact conversion beyond the rule of thumb and says why', () => {
    // 45° = 100Δ exactly (Δ = 100·tan 45°).
    render(<StatefulAngleControl initial={45} conversion="rule of thumb" />);
    expect(otherUnit()).toBe('100.0Δ exact (rule of thumb only below 45°)');
  });

  it('takes a typed value with a sign, a minus sign or the trade word', async () => {
    const user = userEvent.setup();
    const onChange = vi.fn();
    render(<StatefulAngleControl onChange={onChange} />);
    const box = screen.getByRole('textbox', { name: 'Type Objective horizontal angle' });
    await user.type(box, 'exo 12.5{Enter}');
    expect(onChange).toHaveBeenLastCalledWith(-12.5);
    await user.type(box, '−4{Enter}');
    expect(onChange).toHaveBeenLastCalledWith(-4);
    await user.type(box, '+7');
    await user.click(screen.getByRole('button', { name: 'Set' }));
    expect(onChange).toHaveBeenLastCalledWith(7);
    expect((box as HTMLInputElement).value).toBe('');
  });

  it('gives a bare typed number the direction chosen on the toggle', async () => {
    const user = userEvent.setup();
    const onChange = vi.fn();
    render(<StatefulAngleControl onChange={onChange} />);
    await user.click(screen.getByRole('button', { name: 'exo, divergent' }));
    await user.type(screen.getByRole('textbox'), '3{Enter}');
    expect(onChange).toHaveBeenLastCalledWith(-3);
  });

  it('refuses text that is not a number, names the field and keeps what was typed', async () => {
    const user = userEvent.setup();
    const onChange = vi.fn();
    render(<StatefulAngleControl initial={6} onChange={onChange} />);
    const box = screen.getByRole('textbox');
    await user.type(box, 'twelve{Enter}');
    expect(screen.getByRole('alert').textContent).toContain(
      'Objective horizontal angle: “twelve” is not a number',
    );
    expect((box as HTMLInputElement).value).toBe('twelve');
    expect(box.getAttribute('aria-invalid')).toEqual('true');
    expect(onChange).not.toHaveBeenCalled();
    expect(shown()).toBe('eso 6.0°');
  });

  it('refuses a typed value off the scale and says the range', async () => {
    const user = userEvent.setup();
    const onChange = vi.fn();
    render(<StatefulAngleControl onChange={onChange} />);
    await user.type(screen.getByRole('textbox'), '95{Enter}');
    expect(screen.getByRole('alert').textContent).toContain(
      'Objective horizontal angle must be between −90° and +90° (you typed 95).',
    );
    expect(onChange).not.toHaveBeenCalled();
  });

  it('undoes the last entry, then the one before, back to not recorded', async () => {
    const user = userEvent.setup();
    const onChange = vi.fn();
    render(<StatefulAngleControl onChange={onChange} />);
    const undo = () => screen.getByRole('button', { name: /^Undo last entry/ });
    expect(undo()).toHaveProperty('disabled', true);
    await user.click(screen.getByRole('button', { name: '+5° more eso' }));
    await user.type(screen.getByRole('textbox'), 'exo 8{Enter}');
    expect(undo().getAttribute('aria-label')).toBe('Undo last entry (back to eso 5.0°)');
    expect(undo()).toHaveProperty('disabled', false);
    await user.click(undo());
    expect(shown()).toBe('eso 5.0°');
    await user.click(undo());
    expect(shown()).toBe('—');
    expect(onChange.mock.calls.map(([v]) => v)).toEqual([5, -8, 5, null]);
    expect(undo()).toHaveProperty('disabled', true);
  });

  it('clears to not recorded, and the clear can be undone', async () => {
    const user = userEvent.setup();
    const onChange = vi.fn();
    render(<StatefulAngleControl initial={4} onChange={onChange} />);
    await user.click(screen.getByRole('button', { name: 'Clear Objective horizontal angle' }));
    expect(onChange).toHaveBeenLastCalledWith(null);
    expect(spin().getAttribute('aria-valuetext')).toEqual('not recorded');
    await user.click(screen.getByRole('button', { name: /^Undo last entry/ }));
    expect(onChange).toHaveBeenLastCalledWith(4);
  });

  it('is operable from the keyboard: arrows, page keys, plus and minus, delete and undo', async () => {
    const user = userEvent.setup();
    const onChange = vi.fn();
    render(<StatefulAngleControl onChange={onChange} />);
    spin().focus();
    await user.keyboard('{ArrowUp}'); // +1
    await user.keyboard('{Shift>}{ArrowUp}{/Shift}'); // +5
    await user.keyboard('{ArrowRight}'); // +0.5
    await user.keyboard('{PageUp}'); // +5
    await user.keyboard('+'); // +1
    await user.keyboard('-'); // −1
    await user.keyboard('{ArrowLeft}'); // −0.5
    await user.keyboard('{PageDown}'); // −5
    await user.keyboard('{ArrowDown}'); // −1
    expect(onChange.mock.calls.map(([v]) => v)).toEqual([1, 6, 6.5, 11.5, 12.5, 11.5, 11, 6, 5]);
    expect(spin().getAttribute('aria-valuenow')).toEqual('5');
    expect(spin().getAttribute('aria-valuetext')).toEqual(
      'eso, convergent 5.0 degrees, 8.7 prism dioptres, exact',
    );
    await user.keyboard('{Delete}');
    expect(onChange).toHaveBeenLastCalledWith(null);
    await user.keyboard('{Control>}z{/Control}');
    expect(onChange).toHaveBeenLastCalledWith(5);
  });

  it('offers every button as a large target with no hover needed', () => {
    render(<StatefulAngleControl initial={1} />);
    for (const button of screen.getAllByRole('button')) {
      expect(button.className).toMatch(/fl-touch/);
    }
  });
});
