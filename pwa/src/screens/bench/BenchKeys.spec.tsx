// The Bench's keys in the page: a key steps the control in use, marks record the value on the
// stepper and move on, undo puts the last entry back, and nothing fires while a field is typed in.
import { cleanup, screen, waitFor } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { benchFixture } from './bench-harness.fixture';

let bench: Awaited<ReturnType<typeof benchFixture>>;

beforeEach(async () => {
  bench = await benchFixture();
});
afterEach(async () => {
  cleanup();
  await bench.close();
});

const announcer = () => screen.getByTestId('bench-announcer');

describe('the Bench by keys', () => {
  it('steps the first reading from the keypad and says what it recorded', async () => {
    const user = userEvent.setup();
    bench.renderBench('objective-angle');
    await screen.findByRole('heading', { name: 'Objective angle', level: 2 });
    await user.keyboard('[Numpad9][Numpad9][Numpad2]');
    await waitFor(() =>
      expect(announcer().textContent).toBe(
        'Objective horizontal angle: eso, convergent 9.0 degrees',
      ),
    );
    await waitFor(async () =>
      expect((await bench.section('amblyoscopeAngles'))?.objectiveHorizontalDeg).toBe(9),
    );
  });

  it('counts every press of quick presses, each from the value the one before recorded', async () => {
    bench.renderBench('objective-angle');
    await screen.findByRole('heading', { name: 'Objective angle', level: 2 });
    // A pedal pressed three times in a row: the keys arrive before React draws the step again.
    // (Dispatched as the browser does, outside testing-library's act(), which would draw at once.)
    for (let press = 0; press < 3; press += 1) {
      window.dispatchEvent(
        new KeyboardEvent('keydown', { key: 'ArrowUp', code: 'ArrowUp', bubbles: true }),
      );
    }
    await waitFor(() =>
      expect(announcer().textContent).toBe(
        'Objective horizontal angle: eso, convergent 3.0 degrees',
      ),
    );
    await waitFor(async () =>
      expect((await bench.section('amblyoscopeAngles'))?.objectiveHorizontalDeg).toBe(3),
    );
  });

  it('never acts while a text field is typed in, and acts again after Enter', async () => {
    const user = userEvent.setup();
    bench.renderBench('setup');
    await screen.findByRole('heading', { name: 'Setup', level: 2 });
    await user.keyboard('[ArrowRight]');
    const ipd = screen.getByRole('textbox', { name: 'Interpupillary distance (mm)' });
    expect(document.activeElement).toBe(ipd);
    // "b" would mark a break and "]" go to the next step; here they are typed.
    await user.keyboard('6b]');
    expect((ipd as HTMLInputElement).value).toBe('6b]');
    await user.keyboard('[ArrowUp]');
    expect(document.getElementById('fl-bench-step-title')?.textContent).toBe('Setup');
    await user.clear(ipd);
    await user.keyboard('61[Enter][ArrowRight][ArrowUp]');
    await waitFor(() => expect(announcer().textContent).toBe('Own correction worn: Yes'));
    await waitFor(async () =>
      expect((await bench.section('amblyoscopeSetup'))?.ownCorrectionWorn).toBe(true),
    );
    expect((await bench.section('amblyoscopeSetup'))?.interpupillaryDistanceMm).toBe(61);
  });

  it('marks a break, carries it to the recovery, and undoes the last entry', async () => {
    const user = userEvent.setup();
    await bench.seed('amblyoscopeAngles', { subjectiveHorizontalDeg: 0 });
    bench.renderBench('fusional-ranges');
    await screen.findByRole('heading', { name: 'Fusional ranges', level: 2 });
    // From the subjective angle (zero), divergence steps exo; S turns it eso and back.
    await user.keyboard('[KeyS][KeyS][ArrowUp][ArrowUp][ArrowUp][KeyB]');
    await waitFor(() =>
      expect(announcer().textContent).toBe(
        'Divergence break marked at exo, divergent 3.0 degrees. Now divergence recovery',
      ),
    );
    await user.keyboard('[ArrowDown][KeyR]');
    await waitFor(() =>
      expect(announcer().textContent).toBe(
        'Divergence recovery marked at exo, divergent 2.0 degrees. Now convergence break',
      ),
    );
    await waitFor(async () =>
      expect((await bench.section('fusionalRanges'))?.divergenceRecoveryDeg).toBe(-2),
    );
    expect((await bench.section('fusionalRanges'))?.divergenceBreakDeg).toBe(-3);
    await user.keyboard('[Backspace]');
    await waitFor(() =>
      expect(announcer().textContent).toBe('Undone: Divergence recovery back to not recorded.'),
    );
    await waitFor(async () =>
      expect((await bench.section('fusionalRanges'))?.divergenceRecoveryDeg ?? null).toBe(null),
    );
  });
});
