// The push observer: an app given one hears of each committed push with that push's own step
// timings; a push refused before its transaction reports nothing.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { TestApp } from '../testing/test-app';
import type { PushTimings } from './push-observer';
import {
  SITE_A,
  createSyncTestApp,
  newId,
  patientFields,
  tabletFor,
} from './testing/sync-test-kit';

describe('push observer', () => {
  let t: TestApp;
  const heard: PushTimings[] = [];

  beforeAll(async () => {
    t = await createSyncTestApp({ pushObserver: { pushed: (timings) => heard.push(timings) } });
  });
  afterAll(async () => {
    await t.close();
  });

  it('hears each committed push once, with every step timed', async () => {
    const tablet = await tabletFor(t, 'orthoptist', [SITE_A]);
    await tablet.pushOk([tablet.change({ recordId: newId(), fields: patientFields(SITE_A) })]);
    await tablet.pushOk([tablet.change({ recordId: newId(), fields: patientFields(SITE_A) })]);
    expect(heard).toHaveLength(2);
    for (const timings of heard) {
      expect(Object.keys(timings).sort()).toEqual([
        'beginMs',
        'commitMs',
        'earlierMs',
        'envelopeMs',
        'lockMs',
        'logMs',
        'planMs',
        'writeMs',
      ]);
      for (const ms of Object.values(timings)) expect(ms).toBeGreaterThanOrEqual(0);
    }
    // Each push reports its own time, not a running total.
    expect(heard[1]).not.toBe(heard[0]);

    const refused = await tablet.push([], { protocol: 99 });
    expect(refused.status).toBe(400);
    expect(heard).toHaveLength(2);
  });
});
