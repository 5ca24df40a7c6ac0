import { readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { cleanup, render, screen } from '@testing-library/react';
import { afterEach, describe, expect, it } from 'vitest';
import { SyncDock } from './SyncDock';

afterEach(cleanup);

describe('the sync dock above the tab bar', () => {
  it('takes its own strip in the tabs’ bottom slot instead of floating over the screen', () => {
    // The app's theme, so the computed style is what Chromium applies.
    const style = document.createElement('style');
    style.textContent = readFileSync(
      resolve(import.meta.dirname, '../theme/variables.css'),
      'utf8',
    );
    document.head.append(style);
    try {
      render(<SyncDock />);
      const indicator = screen.getByRole('region', { name: /^Sync status: online/ });
      const dock = indicator.parentElement as HTMLElement;
      expect(dock.getAttribute('slot')).toBe('bottom');
      const drawn = getComputedStyle(dock);
      // In the flow of ion-tabs (between the screens and the tab bar), not fixed over them.
      expect([drawn.position, drawn.display]).toEqual(['static', 'flex']);
      expect(screen.getByRole('status').textContent).toBe('Online· Sync not started');
    } finally {
      style.remove();
    }
  });
});
