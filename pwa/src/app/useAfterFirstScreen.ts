// True once the first screen is drawn and the browser has a moment to spare: the app's banners
// (storage warning, damaged values, update prompt and the service worker's registration) load
// then, so their code, their reads and the service worker's downloads do not compete with the
// first screen for the network and the main thread. Never later than `timeoutMs`.
import { useEffect, useState } from 'react';

export function useAfterFirstScreen(timeoutMs = 1_500): boolean {
  const [ready, setReady] = useState(false);
  useEffect(() => {
    if (typeof requestIdleCallback === 'function') {
      const handle = requestIdleCallback(() => setReady(true), { timeout: timeoutMs });
      return () => cancelIdleCallback(handle);
    }
    const timer = setTimeout(() => setReady(true), Math.min(timeoutMs, 300));
    return () => clearTimeout(timer);
  }, [timeoutMs]);
  return ready;
}

/**
 * False for a component's first commit, true from the next task on: a part of a screen drawn one
 * task after the rest, so that its work (Ionic renders each new element within the task that
 * attached it) is not added to the same long task as everything around it.
 */
export function useAfterFirstCommit(): boolean {
  const [ready, setReady] = useState(false);
  useEffect(() => {
    const timer = setTimeout(() => setReady(true), 0);
    return () => clearTimeout(timer);
  }, []);
  return ready;
}
