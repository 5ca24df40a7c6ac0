import { cleanup, render, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { DisputeView } from './DisputeView';
import { angleDispute } from './review-fixtures';

afterEach(cleanup);

describe('DisputeView', () => {
  it('shows each candidate as the clinician sees it, with who, which tablet and when in the clinic zone', () => {
    render(
      <DisputeView
        dispute={angleDispute()}
        now={new Date('2026-12-01T12:33:00Z')}
        onResolve={vi.fn()}
      />,
    );
    const candidates = screen.getByRole('group', { name: 'Values entered' });
    // 12° → 100·tan(12°) = 21.26Δ (prism dioptre definition); −8° → 14.05Δ.
    const textsOf = (selector: string, root: ParentNode = candidates) =>
      [...root.querySelectorAll(selector)].map((e) => e.textContent);
    expect(textsOf('.fl-review-candidate__value')).toEqual([
      'eso 12.0° (21.3Δ)',
      'exo 8.0° (14.1Δ)',
      'Enter a corrected value',
    ]);
    expect(within(candidates).queryByText('12')).toBeNull();
    expect(within(candidates).queryByText('-8')).toBeNull();
    // 09:30 UTC on 1 Dec is 22:30 in Auckland (UTC+13 in December).
    expect(textsOf('.fl-review-candidate__who')).toEqual([
      'Entered by Ada Quill on Room 2 tablet, 1 Dec 2026, 22:30 GMT+13',
      'Entered by Bram Osei on Outreach tablet, 1 Dec 2026, 22:32 GMT+13',
    ]);
    const provisionalBadges = within(candidates).getAllByText('Provisional (held now)');
    expect(provisionalBadges).toHaveLength(1);
    expect(provisionalBadges[0]!.closest('label')!.textContent).toContain('exo 8.0°');
    // The rest of the visit's angles, in words, for context.
    expect(
      [...document.querySelectorAll('.fl-review-context__row')].map((row) => [
        row.querySelector('dt')?.textContent,
        row.querySelector('dd')?.textContent,
      ]),
    ).toEqual([
      ['Objective horizontal angle (disputed)', 'exo 8.0° (14.1Δ)'],
      ['Subjective horizontal angle', 'eso 4.0° (7.0Δ)'],
      ['Objective vertical angle', 'R/L 2.0Δ (1.1°)'],
    ]);
    expect(document.querySelector('header p.fl-muted')?.textContent).toBe(
      'Mira Tenby · visit of 2026-12-01 · Harbour Street Clinic · open for 3 h (since 1 Dec 2026, 22:33 GMT+13)',
    );
  });

  it('requires a note before resolving, and sends the chosen candidate with it', async () => {
    const user = userEvent.setup();
    const onResolve = vi.fn().mockResolvedValue(undefined);
    render(
      <DisputeView
        dispute={angleDispute()}
        now={new Date('2026-12-01T12:33:00Z')}
        onResolve={onResolve}
      />,
    );
    await user.click(screen.getByRole('radio', { name: /eso 12\.0°/ }));
    await user.click(screen.getByRole('button', { name: 'Resolve dispute' }));
    expect((await screen.findByText('A note saying why is required')).getAttribute('role')).toBe(
      'alert',
    );
    expect(onResolve).not.toHaveBeenCalled();
    await user.type(
      screen.getByLabelText('Note: why this value (required)'),
      'Re-measured at the bench',
    );
    await user.click(screen.getByRole('button', { name: 'Resolve dispute' }));
    expect(onResolve).toHaveBeenCalledWith({ value: 12, note: 'Re-measured at the bench' });
  });

  it('asks for a choice when none is made', async () => {
    const user = userEvent.setup();
    const onResolve = vi.fn();
    render(
      <DisputeView
        dispute={angleDispute()}
        now={new Date('2026-12-01T12:33:00Z')}
        onResolve={onResolve}
      />,
    );
    await user.type(screen.getByLabelText('Note: why this value (required)'), 'why');
    await user.click(screen.getByRole('button', { name: 'Resolve dispute' }));
    await waitFor(() =>
      expect(
        within(screen.getByRole('group', { name: 'Values entered' })).getByRole('alert')
          .textContent,
      ).toBe('Choose one of the values, or enter a corrected value.'),
    );
    expect(onResolve).not.toHaveBeenCalled();
  });

  it('takes a corrected angle through the angle control and refuses one off the scale, naming the field', async () => {
    const user = userEvent.setup();
    const onResolve = vi.fn().mockResolvedValue(undefined);
    render(
      <DisputeView
        dispute={angleDispute()}
        now={new Date('2026-12-01T12:33:00Z')}
        onResolve={onResolve}
      />,
    );
    await user.click(screen.getByRole('radio', { name: 'Enter a corrected value' }));
    const typed = screen.getByLabelText('Type Corrected objective horizontal angle');
    await user.type(typed, 'exo 95');
    await user.click(screen.getByRole('button', { name: 'Set' }));
    expect(
      (
        await screen.findByText(
          /Corrected objective horizontal angle must be between −90° and \+90°/,
        )
      ).textContent,
    ).toContain('95');
    await user.clear(typed);
    await user.type(typed, 'exo 10');
    await user.click(screen.getByRole('button', { name: 'Set' }));
    await user.type(screen.getByLabelText('Note: why this value (required)'), 'Both readings off');
    await user.click(screen.getByRole('button', { name: 'Resolve dispute' }));
    expect(onResolve).toHaveBeenCalledWith({ value: -10, note: 'Both readings off' });
  });

  it('says a signed visit’s resolution becomes an Addendum', () => {
    render(
      <DisputeView
        dispute={angleDispute({ signedVisit: true })}
        now={new Date('2026-12-01T12:33:00Z')}
        onResolve={vi.fn()}
      />,
    );
    expect(screen.getByRole('note').textContent).toContain('recorded as an Addendum');
    expect(document.querySelector('.fl-review-actions button')?.textContent).toBe(
      'Resolve as Addendum',
    );
    expect(screen.queryByRole('button', { name: 'Resolve dispute' })).toBeNull();
  });

  it('shows the server’s refusal in words', async () => {
    const user = userEvent.setup();
    const onResolve = vi.fn().mockRejectedValue(new Error('This dispute was already resolved.'));
    render(
      <DisputeView
        dispute={angleDispute()}
        now={new Date('2026-12-01T12:33:00Z')}
        onResolve={onResolve}
      />,
    );
    await user.click(screen.getByRole('radio', { name: /exo 8\.0°/ }));
    await user.type(screen.getByLabelText('Note: why this value (required)'), 'ok');
    await user.click(screen.getByRole('button', { name: 'Resolve dispute' }));
    await waitFor(() =>
      expect(screen.getByRole('alert').textContent).toBe('This dispute was already resolved.'),
    );
  });
});
