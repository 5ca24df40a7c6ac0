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
    expect(screen.getByRole('region', { name: 'Letters' })).toBeTruthy();
    expect(screen.getByRole('alert').textContent).toContain(
      'could not be shown (the letter record could not be read)',
    );
    expect(screen.getByText('Sign visit')).toBeTruthy();
  });

  it('shows the panel itself when nothing fails', () => {
    render(
      <PanelBoundary title="Letters">
        <p>Letters panel</p>
      </PanelBoundary>,
    );
    expect(screen.getByText('Letters panel')).toBeTruthy();
    expect(screen.queryByRole('alert')).toBeNull();
  });
});
