import { cleanup, screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { CLINICAL_CAUTION } from '@fuselight/shared';
import { queryKeys } from '../../data/query-keys';
import { benchFixture } from './bench-harness.fixture';

let bench: Awaited<ReturnType<typeof benchFixture>>;

beforeEach(async () => {
  bench = await benchFixture();
});
afterEach(async () => {
  cleanup();
  await bench.close();
});

const alerts = () =>
  screen
    .getAllByRole('alert')
    .map((a) => a.textContent)
    .join(' ');
const saved = () => screen.findByText('Saved on this tablet');
/** Chooses a reading in a step's list of readings, so the stepper edits it. */
const chooseReading = async (user: ReturnType<typeof userEvent.setup>, label: string) =>
  user.click(await screen.findByRole('button', { name: new RegExp(`^${label}: `) }));

describe('the Bench', () => {
  it('opens at the step named in the address and lists every step in the trade’s order', async () => {
    bench.renderBench('setup');
    await screen.findByRole('heading', { name: 'Setup', level: 2 });
    const steps = screen.getByRole('navigation', { name: 'Bench steps' }).querySelectorAll('li');
    expect([...steps].map((li) => li.textContent?.replace(/^\d+/, ''))).toEqual([
      'Setup',
      'Simultaneous perception',
      'Subjective angle',
      'Objective angle',
      'Suppression scotoma',
      'Fusion',
      'Fusional ranges',
      'Gross stereopsis',
      'Summary',
    ]);
    // The step's own save state (the sync indicator is another status on the screen).
    expect(document.querySelector('.fl-bench-save')?.textContent).toBe('Nothing entered yet');
  });

  it('saves a setup answer to the tablet with its Outbox entry before it says Saved', async () => {
    const user = userEvent.setup();
    bench.renderBench('setup');
    const zeroed = await screen.findByRole('group', { name: 'Dials zeroed' });
    await user.click(zeroed.querySelector('input[value="yes"]')!);
    await saved();
    expect((await bench.section('amblyoscopeSetup'))?.dialsZeroed).toBe(true);
    const entries = await bench.outbox.listEntries();
    expect(entries.some((e) => e.collection === 'amblyoscopeSetup')).toBe(true);
  });

  it('refuses an interpupillary distance that is not a number or off the scale, naming the field', async () => {
    const user = userEvent.setup();
    bench.renderBench('setup');
    const ipd = await screen.findByRole('textbox', { name: 'Interpupillary distance (mm)' });
    await user.type(ipd, 'sixty{Enter}');
    expect(alerts()).toContain('Interpupillary distance: “sixty” is not a number');
    await user.clear(ipd);
    await user.type(ipd, '95{Enter}');
    expect(alerts()).toContain('Interpupillary distance must be between 40 and 80 mm');
    expect((ipd as HTMLInputElement).value).toBe('95');
    expect(await bench.section('amblyoscopeSetup')).toBeUndefined();
    await user.clear(ipd);
    await user.type(ipd, '62{Enter}');
    await saved();
    expect((await bench.section('amblyoscopeSetup'))?.interpupillaryDistanceMm).toBe(62);
  });

  it('skips a step with a reason, shows it not done, and takes it back to test it after all', async () => {
    const user = userEvent.setup();
    bench.renderBench('simultaneous-perception');
    await user.click(await screen.findByRole('button', { name: 'Skip simultaneous perception…' }));
    await user.click(screen.getByRole('button', { name: 'Not tested: patient tired' }));
    await screen.findByText('not tested: patient tired');
    expect((await bench.section('simultaneousPerception'))?.skippedReason).toBe(
      'not tested: patient tired',
    );
    await waitFor(() =>
      expect(
        screen.getByRole('button', { name: /Simultaneous perception/, current: 'step' })
          .textContent,
      ).toContain('not done'),
    );
    await user.click(screen.getByRole('button', { name: 'Test simultaneous perception now' }));
    await screen.findByRole('group', { name: 'Both pictures seen together?' });
    await waitFor(async () =>
      expect((await bench.section('simultaneousPerception'))?.skippedReason).toBeNull(),
    );
  });

  it('asks for a reason before a step is skipped', async () => {
    const user = userEvent.setup();
    bench.renderBench('fusion');
    await user.click(await screen.findByRole('button', { name: 'Skip fusion…' }));
    await user.click(screen.getByRole('button', { name: 'Record as not tested' }));
    expect(alerts()).toContain('Reason not done cannot be empty');
    expect(await bench.section('fusion')).toBeUndefined();
  });

  it('shows the correspondence live as the objective angle is entered, with the caution', async () => {
    const user = userEvent.setup();
    await bench.seed('amblyoscopeAngles', { subjectiveHorizontalDeg: 0 });
    bench.renderBench('objective-angle');
    const result = await screen.findByTestId('correspondence-result');
    expect(result.textContent).toContain('Record both the subjective and the objective');
    const box = screen.getByRole('textbox', { name: 'Type Objective horizontal angle' });
    await user.type(box, 'eso 12{Enter}');
    // Angle of anomaly = objective − subjective (Millodot); subjective ≈ 0 with a deviated
    // objective angle is harmonious ARC (Stedman's), tolerance 5° (clinic default).
    await waitFor(() =>
      expect(screen.getByTestId('correspondence-result').textContent).toContain(
        'harmonious ARC · angle of anomaly 12.0°',
      ),
    );
    expect(screen.getByTestId('correspondence-result').textContent).toContain(CLINICAL_CAUTION);
    await saved();
    expect((await bench.section('amblyoscopeAngles'))?.objectiveHorizontalDeg).toBe(12);
    await user.type(box, 'eso 2{Enter}');
    await waitFor(() =>
      expect(screen.getByTestId('correspondence-result').textContent).toContain('NRC'),
    );
  });

  it('calls a single picture missing a mark suppression, not fusion', async () => {
    const user = userEvent.setup();
    bench.renderBench('fusion');
    const left = await screen.findByRole('group', { name: 'Left control mark seen' });
    await user.click(left.querySelector('input[value="no"]')!);
    expect((await screen.findByText(/The left control mark was not seen/)).textContent).toContain(
      'suppression of the left eye, not fusion',
    );
  });

  it('flags a higher BSV grade recorded over an absent one where it is entered', async () => {
    const user = userEvent.setup();
    await bench.seed('simultaneousPerception', { result: 'absent', suppressingEye: 'left' });
    bench.renderBench('fusion');
    const result = await screen.findByRole('group', { name: 'Fusion' });
    await user.click(result.querySelector('input[value="present"]')!);
    const warning = (await screen.findByText(/BSV grades disagree/)).parentElement;
    expect(warning?.textContent).toContain(
      'Fusion is recorded as present while simultaneous perception is absent',
    );
    expect(warning?.textContent).toContain(CLINICAL_CAUTION);
  });

  it('derives range amplitudes from the subjective angle, names the norms table and notes proximal convergence', async () => {
    const user = userEvent.setup();
    await bench.seed('amblyoscopeAngles', { subjectiveHorizontalDeg: 2 });
    bench.renderBench('fusional-ranges');
    await screen.findByText(
      /Compared with: Amblyoscope fusional amplitudes \(Fuselight defaults\), version 1\.0\.0/,
    );
    await user.type(screen.getByRole('textbox', { name: 'Type Divergence break' }), 'exo 4{Enter}');
    await chooseReading(user, 'Convergence break');
    await user.type(
      screen.getByRole('textbox', { name: 'Type Convergence break' }),
      'eso 40{Enter}',
    );
    // One row a direction: the break and recovery amplitudes, each against its norm row.
    const result = screen.getByTestId('ranges-result');
    const row = (direction: string) =>
      within(result)
        .getAllByRole('cell')
        .filter((cell) => cell.parentElement?.querySelector('th')?.textContent === direction)
        .map((cell) => cell.textContent);
    await waitFor(() =>
      expect(row('divergence')).toEqual(['6.0° · within 4–6° (memory)', 'not recorded']),
    );
    expect(row('convergence')).toEqual(['38.0° · above 25–30° (teaching source)', 'not recorded']);
    expect(within(result).getByText(/^Norms: /).textContent).toBe(
      'Norms: [memory] recalled value, not confirmed against a publication; replace with the clinic’s own; teaching source (no published reference; common practice).',
    );
    expect(within(result).getByRole('note').textContent).toBe(CLINICAL_CAUTION);
    expect(screen.getByTestId('proximal-convergence-note').textContent).toContain(
      'proximal convergence often inflates convergence ranges',
    );
    await saved();
    const stored = await bench.section('fusionalRanges');
    expect(stored?.divergenceBreakDeg).toBe(-4);
    expect(stored?.normsTable).toBe('fuselight.fusional-norms.amblyoscope@1.0.0');
  });

  it('refuses a recovery past the break in words and keeps the entry', async () => {
    const user = userEvent.setup();
    await bench.seed('amblyoscopeAngles', { subjectiveHorizontalDeg: 0 });
    await bench.seed('fusionalRanges', { convergenceBreakDeg: 20 });
    bench.renderBench('fusional-ranges');
    await chooseReading(user, 'Convergence recovery');
    await user.type(
      await screen.findByRole('textbox', { name: 'Type Convergence recovery' }),
      'eso 25{Enter}',
    );
    await waitFor(() =>
      expect(screen.getByTestId('ranges-result').textContent).toContain(
        'convergence.recovery: must lie between the starting angle',
      ),
    );
  });

  it('draws the suppression scotoma around the fovea from the objective angle', async () => {
    const user = userEvent.setup();
    await bench.seed('amblyoscopeAngles', { objectiveHorizontalDeg: 10 });
    await bench.seed('suppressionScotoma', {
      deviatingEye: 'left',
      horizontalLostConvergentDeg: 14,
      verticalLostUpperDeg: 3,
      verticalLostLowerDeg: -2,
    });
    bench.renderBench('suppression-scotoma');
    await chooseReading(user, 'Picture lost, divergent side');
    await user.type(
      await screen.findByRole('textbox', { name: 'Type Picture lost, divergent side' }),
      'eso 7{Enter}',
    );
    const map = await screen.findByRole('img', { name: /Scotoma of the left eye/ });
    expect(map.getAttribute('aria-label')).toBe(
      'Scotoma of the left eye: 3.0° divergent to 4.0° convergent (width 7.0°), 3.0° up to 2.0° down; it covers the fovea.',
    );
    const ellipse = screen.getByTestId('scotoma-region');
    expect(ellipse.getAttribute('rx')).toBe('3.5');
    expect(ellipse.getAttribute('cx')).toBe('0.5');
  });

  it('records stereo trials through the repository and sums them up with the caution', async () => {
    const user = userEvent.setup();
    bench.renderBench('gross-stereopsis', () => 0.1); // every presentation "toward"
    await user.click(await screen.findByRole('button', { name: 'Patient says: toward' }));
    await saved();
    expect((await bench.section('grossStereopsis'))?.trials).toEqual([
      { presented: 'toward', answer: 'toward', correct: true },
    ]);
    await user.click(screen.getByRole('button', { name: /Next: Summary/ }));
    const summary = await screen.findByRole('heading', { name: 'Summary', level: 2 });
    expect(summary.closest('section')?.textContent).toContain(CLINICAL_CAUTION);
    expect(summary.closest('section')?.textContent).toContain('4 more right answers in a row');
  });

  describe('re-reads only the Section a stepper tap wrote', () => {
    /** The keys of the queries that run from now on. */
    const recordFetches = () => {
      const fetched: string[] = [];
      const stop = bench.queryClient.getQueryCache().subscribe((event) => {
        if (event.type === 'updated' && event.action.type === 'fetch') {
          fetched.push(JSON.stringify(event.query.queryKey));
        }
      });
      return { fetched, stop };
    };
    const ownQuery = () =>
      JSON.stringify(queryKeys.charting.visitPart(bench.visitId, 'amblyoscopeAngles'));

    it('when the Section is already on the tablet', async () => {
      const user = userEvent.setup();
      await bench.seed('amblyoscopeAngles', { subjectiveHorizontalDeg: 4 });
      bench.renderBench('subjective-angle');
      const more = (await screen.findAllByRole('button', { name: /^\+1° more/ }))[0]!;
      await waitFor(() => expect(bench.queryClient.isFetching()).toBe(0));
      const { fetched, stop } = recordFetches();
      await user.click(more);
      await saved();
      await waitFor(() => expect(bench.queryClient.isFetching()).toBe(0));
      stop();
      expect((await bench.section('amblyoscopeAngles'))?.subjectiveHorizontalDeg).toBe(5);
      // Before, the tap re-read the whole visit (visit, patient, 15 Section collections and the
      // Addenda) twice over: once for the save and once for the data listener.
      expect(fetched).toEqual([ownQuery()]);
    });

    it('when the tap makes the Section', async () => {
      const user = userEvent.setup();
      bench.renderBench('subjective-angle');
      const more = (await screen.findAllByRole('button', { name: /^\+1° more/ }))[0]!;
      await waitFor(() => expect(bench.queryClient.isFetching()).toBe(0));
      const { fetched, stop } = recordFetches();
      await user.click(more);
      await saved();
      await waitFor(() => expect(bench.queryClient.isFetching()).toBe(0));
      stop();
      expect((await bench.section('amblyoscopeAngles'))?.subjectiveHorizontalDeg).toBe(1);
      expect(fetched).toEqual([ownQuery()]);
    });
  });
});
