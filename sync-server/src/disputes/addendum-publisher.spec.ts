// The Addendum recovery sweep runs once when the server starts (for Addenda whose publishing a
// crash interrupted) and never again while it runs: nothing polls. In tests it does not run.
import { afterEach, describe, expect, it, vi } from 'vitest';
import type { AppConfig } from '../config/app-config';
import { AddendumPublisher } from './addendum-publisher.service';

function publisherFor(env: AppConfig['env']): AddendumPublisher {
  const none = {} as never;
  return new AddendumPublisher(none, none, none, { env } as AppConfig, none, none, none);
}

afterEach(() => {
  vi.useRealTimers();
  vi.restoreAllMocks();
});

describe('AddendumPublisher recovery sweep', () => {
  it('publishes pending Addenda once at start and does not poll afterwards', async () => {
    vi.useFakeTimers();
    const publisher = publisherFor('production');
    const sweep = vi.spyOn(publisher, 'publishPending').mockResolvedValue([]);
    publisher.onApplicationBootstrap();
    await publisher.onApplicationShutdown();
    expect(sweep).toHaveBeenCalledTimes(1);
    expect(sweep).toHaveBeenCalledWith(Number.POSITIVE_INFINITY);
    await vi.advanceTimersByTimeAsync(60 * 60_000);
    expect(sweep).toHaveBeenCalledTimes(1);
    expect(vi.getTimerCount()).toBe(0);
  });

  it('logs a failed sweep and lets the server start', async () => {
    const publisher = publisherFor('production');
    const sweep = vi
      .spyOn(publisher, 'publishPending')
      .mockRejectedValue(new Error('database restarting'));
    const logged = vi
      .spyOn((publisher as unknown as { logger: { error: (m: string) => void } }).logger, 'error')
      .mockImplementation(() => undefined);
    publisher.onApplicationBootstrap();
    await publisher.onApplicationShutdown();
    expect(sweep).toHaveBeenCalledTimes(1);
    expect(logged).toHaveBeenCalledWith(expect.stringContaining('database restarting'));
  });

  it('does not sweep in tests (they publish explicitly)', async () => {
    const publisher = publisherFor('test');
    const sweep = vi.spyOn(publisher, 'publishPending').mockResolvedValue([]);
    publisher.onApplicationBootstrap();
    await publisher.onApplicationShutdown();
    expect(sweep).not.toHaveBeenCalled();
  });
});
