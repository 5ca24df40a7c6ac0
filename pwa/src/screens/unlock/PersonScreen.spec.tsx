// The You screen's sync note: a full re-sync under way, the last one done, or none needed.
import { cleanup, render, screen } from '@testing-library/react';
import { afterEach, describe, expect, it } from 'vitest';
import { FullRepullNote } from './PersonScreen';

afterEach(cleanup);

describe('the You screen’s full re-sync note', () => {
  it('says none has been needed, then one under way with its count, then when it ended', () => {
    const { rerender } = render(<FullRepullNote repull={null} />);
    expect(screen.getByRole('status').textContent).toBe(
      'No full re-sync has been needed on this tablet.',
    );
    rerender(
      <FullRepullNote
        repull={{ reason: 'cursor-epoch', startedAt: 1, finishedAt: null, received: 7 }}
      />,
    );
    expect(screen.getByRole('status').textContent).toMatch(
      /^Full re-sync under way .*7 records received so far\. Your edits and Outbox are kept\.$/,
    );
    rerender(
      <FullRepullNote
        repull={{ reason: 'cursor-epoch', startedAt: 1, finishedAt: 86_400_000, received: 7 }}
      />,
    );
    expect(screen.getByRole('status').textContent).toBe(
      `Full re-sync done at ${new Date(86_400_000).toLocaleString()}: 7 records received.`,
    );
    expect(screen.getByRole('region', { name: 'Full re-sync' })).toBeDefined();
  });
});
