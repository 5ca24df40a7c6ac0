import { cleanup, render, screen } from '@testing-library/react';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { PanelBoundary } from './PanelBoundary';

afterEach(cleanup);

function Broken(): never {
  throw new Error('the letter record could not be read');
}

describe('a panel boundary on the Visit', () => {
  it('keeps a failing panel to itself and says what went wrong', () => {
    const quiet = vi.spyOn(console, 'error').mockImplementation(() => undefined);
    render(
      <main>
        <PanelBoundary title="Letters">
          <Broken />
        </PanelBoundary>
        <p>Sign visit</p>
      </main>,
    );
    quiet.mockRestore();
    const region = screen.getByRole('region', { name: 'Letters' });
    // The alert is inside the failed panel, and the rest of the Visit still shows.
    expect(region.contains(screen.getByRole('alert'))).toBe(true);
    expect(screen.getByRole('alert').textContent).toContain(
      'could not be shown (the letter record could not be read)',
    );
    expect(screen.getByRole('main').lastElementChild?.textContent).toBe('Sign visit');
    expect(region.contains(screen.getByRole('main').lastElementChild)).toBe(false);
  });

  it('shows the panel itself when nothing fails', () => {
    render(
      <PanelBoundary title="Letters">
        <p>Letters panel</p>
      </PanelBoundary>,
    );
    expect(document.body.textContent).toBe('Letters panel');
    expect(screen.queryByRole('alert')).toBeNull();
  });
});
