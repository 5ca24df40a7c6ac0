import type { GrossStereoTrial } from '@fuselight/shared';
import { cleanup, render, screen } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { useState } from 'react';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { scriptedRandom } from '../bench-harness.fixture';
import { StereoTrialRunner, cryptoRandom } from './StereoTrialRunner';

afterEach(cleanup);

function Runner({
  random,
  onRecord,
}: {
  random: () => number;
  onRecord?: (t: GrossStereoTrial[]) => void;
}) {
  const [trials, setTrials] = useState<GrossStereoTrial[]>([]);
  return (
    <StereoTrialRunner
      trials={trials}
      random={random}
      onRecord={(next) => {
        setTrials(next);
        onRecord?.(next);
      }}
    />
  );
}

const next = () => screen.getByTestId('stereo-next').textContent;
const more = () => screen.queryByTestId('stereo-more-needed')?.textContent ?? null;
const toward = () => screen.getByRole('button', { name: 'Patient says: toward' });
const away = () => screen.getByRole('button', { name: 'Patient says: away' });

describe('StereoTrialRunner', () => {
  it('tells the clinician the next presentation in the injected order', async () => {
    const user = userEvent.setup();
    // stereoTrialSequence maps a draw below ½ to "toward", otherwise "away".
    render(<Runner random={scriptedRandom([0.1, 0.7, 0.9, 0.2])} />);
    expect(next()).toContain('Trial 1');
    expect(next()).toContain('toward the patient');
    await user.click(toward());
    expect(next()).toContain('Trial 2');
    expect(next()).toContain('away from the patient');
    await user.click(away());
    expect(next()).toContain('away from the patient');
    await user.click(toward()); // a wrong answer
    expect(next()).toContain('toward the patient');
  });

  it('records the answer with whether it matched the picture shown', async () => {
    const user = userEvent.setup();
    const onRecord = vi.fn();
    render(<Runner random={scriptedRandom([0.7])} onRecord={onRecord} />);
    await user.click(toward());
    expect(onRecord).toHaveBeenLastCalledWith([
      { presented: 'away', answer: 'toward', correct: false },
    ]);
  });

  it('shows gross stereopsis after five right of five, P(X ≥ 5 | n = 5) = 0.03125', async () => {
    const user = userEvent.setup();
    render(<Runner random={scriptedRandom([0.1, 0.8, 0.3, 0.6, 0.4])} />);
    // No trials: 5 in a row are needed, since P(X ≥ 4 | 4) = 0.0625 ≥ 0.05 (exact binomial).
    expect(more()).toContain('5 more right answers');
    const answers = ['toward', 'away', 'toward', 'away', 'toward'] as const;
    for (const [i, said] of answers.entries()) {
      await user.click(said === 'toward' ? toward() : away());
      if (i === 0) expect(more()).toContain('4 more right answers');
    }
    const verdict = screen.getByTestId('stereo-verdict').textContent;
    expect(verdict).toContain('Gross stereopsis shown');
    // Exact binomial tail, docs/clinical-reference.md: P(X ≥ 5 | n = 5) = 0.03125.
    expect(screen.getByTestId('stereo-chance').textContent).toBe('1/32 = 0.03125');
    expect(more()).toBeNull();
    expect(verdict).toContain('supports and does not replace clinical judgement');
  });

  it('says how many more are needed after a wrong answer, P(X ≥ 7 | 8) = 0.03515625', async () => {
    const user = userEvent.setup();
    render(<Runner random={scriptedRandom([0.1])} />);
    await user.click(toward());
    await user.click(away()); // wrong: the picture was toward
    // 1 of 2 right; six more in a row make 7 of 8, tail 0.03515625 < 0.05, while five more make
    // 6 of 7, tail 0.0625 (exact binomial, docs/clinical-reference.md).
    expect(more()).toContain('6 more right answers');
    for (let i = 0; i < 6; i += 1) await user.click(toward());
    expect(screen.getByTestId('stereo-chance').textContent).toBe('9/256 = 0.03515625');
    expect(screen.getByTestId('stereo-verdict').textContent).toContain('Gross stereopsis shown');
  });

  it('undoes the last trial and offers the same presentation again', async () => {
    const user = userEvent.setup();
    render(<Runner random={scriptedRandom([0.9, 0.1])} />);
    await user.click(away());
    expect(next()).toContain('toward the patient');
    await user.click(screen.getByRole('button', { name: 'Undo last trial' }));
    expect(next()).toContain('Trial 1');
    expect(next()).toContain('away from the patient');
  });

  it('draws its default order from the cryptographic generator, in [0, 1)', () => {
    const spy = vi.spyOn(crypto, 'getRandomValues');
    const draws = Array.from({ length: 50 }, cryptoRandom);
    expect(spy).toHaveBeenCalledTimes(50);
    expect(draws.every((d) => d >= 0 && d < 1)).toBe(true);
    spy.mockRestore();
  });
});
