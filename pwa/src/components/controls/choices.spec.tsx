import { cleanup, render, screen, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { useState } from 'react';
import { afterEach, describe, expect, it, vi } from 'vitest';
import type { BsvResult } from '@fuselight/shared';
import { EyeChoice } from './EyeChoice';
import { TriStateChoice } from './TriStateChoice';
import { YesNoChoice } from './YesNoChoice';

afterEach(cleanup);

function TriHarness({ onChange }: { onChange: (v: BsvResult | null) => void }) {
  const [value, setValue] = useState<BsvResult | null>(null);
  return (
    <TriStateChoice
      label="Simultaneous perception"
      value={value}
      onChange={(v) => {
        setValue(v);
        onChange(v);
      }}
    />
  );
}

describe('TriStateChoice', () => {
  it('records present, absent or not tested as one choice in a named group', async () => {
    const user = userEvent.setup();
    const onChange = vi.fn();
    render(<TriHarness onChange={onChange} />);
    const group = screen.getByRole('group', { name: 'Simultaneous perception' });
    // Three choices in the group, none chosen until the clinician chooses.
    expect(
      within(group)
        .getAllByRole('radio')
        .map((r) => [r.closest('label')?.textContent, (r as HTMLInputElement).checked]),
    ).toEqual([
      ['Present', false],
      ['Absent', false],
      ['Not tested', false],
    ]);
    await user.click(screen.getByRole('radio', { name: 'Absent' }));
    await user.click(screen.getByRole('radio', { name: 'Not tested' }));
    expect(onChange.mock.calls.map(([v]) => v)).toEqual(['absent', 'notTested']);
    expect((screen.getByRole('radio', { name: 'Not tested' }) as HTMLInputElement).checked).toBe(
      true,
    );
    expect((screen.getByRole('radio', { name: 'Absent' }) as HTMLInputElement).checked).toBe(false);
  });

  it('clears back to not recorded rather than guessing', async () => {
    const user = userEvent.setup();
    const onChange = vi.fn();
    render(<TriHarness onChange={onChange} />);
    await user.click(screen.getByRole('radio', { name: 'Present' }));
    await user.click(screen.getByRole('button', { name: 'Clear Simultaneous perception' }));
    expect(onChange).toHaveBeenLastCalledWith(null);
  });
});

describe('EyeChoice', () => {
  it('offers right and left, and alternating only when asked', async () => {
    const user = userEvent.setup();
    const onChange = vi.fn();
    const { rerender } = render(
      <EyeChoice label="Suppressing eye" value={null} onChange={onChange} />,
    );
    expect(screen.queryByRole('radio', { name: 'Alternating' })).toBeNull();
    await user.click(screen.getByRole('radio', { name: 'Left eye' }));
    expect(onChange).toHaveBeenLastCalledWith('left');
    rerender(
      <EyeChoice<'right' | 'left' | 'alternating'>
        label="Suppressing eye"
        value="left"
        onChange={onChange}
        allowAlternating
      />,
    );
    await user.click(screen.getByRole('radio', { name: 'Alternating' }));
    expect(onChange).toHaveBeenLastCalledWith('alternating');
  });
});

describe('YesNoChoice', () => {
  it('maps its words to true and false and starts as not recorded', async () => {
    const user = userEvent.setup();
    const onChange = vi.fn();
    render(
      <YesNoChoice
        label="Right control mark seen"
        value={null}
        onChange={onChange}
        words={{ yes: 'Seen', no: 'Not seen' }}
      />,
    );
    for (const radio of screen.getAllByRole('radio')) {
      expect((radio as HTMLInputElement).checked).toBe(false);
    }
    await user.click(screen.getByRole('radio', { name: 'Not seen' }));
    expect(onChange).toHaveBeenLastCalledWith(false);
    await user.click(screen.getByRole('radio', { name: 'Seen' }));
    expect(onChange).toHaveBeenLastCalledWith(true);
  });
});
