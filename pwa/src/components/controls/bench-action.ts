// How a key on the Bench reaches the control it acts on: the Bench sends a DOM event named
// BENCH_ACTION_EVENT to the focused control, and it bubbles through the step; a control that
// does the action claims it (preventDefault) and says what it recorded, for the screen reader
// and the spoken value. Controls elsewhere never receive it, so they behave as before.
import { type RefObject, useLayoutEffect, useRef } from 'react';

export const BENCH_ACTION_EVENT = 'fl-bench-action';

export interface BenchActionDetail {
  action: string;
  /** What the control did, in words ("Subjective horizontal angle: eso 3.0 degrees"). */
  announce: string | null;
}

/** Sends `action` to `target`; returns what was done, or null when nothing took it. */
export function sendBenchAction(target: Element, action: string, bubbles = true): string | null {
  const detail: BenchActionDetail = { action, announce: null };
  const event = new CustomEvent<BenchActionDetail>(BENCH_ACTION_EVENT, {
    detail,
    bubbles,
    cancelable: true,
  });
  const notTaken = target.dispatchEvent(event);
  return notTaken ? null : (detail.announce ?? '');
}

/**
 * Listens on `ref` for Bench actions. `handle` returns the words for what it did, or undefined
 * when the action is not its own (the event then goes on to the step and the Bench).
 */
export function useBenchAction(
  ref: RefObject<Element | null>,
  handle: (action: string) => string | undefined,
): void {
  const latest = useRef(handle);
  useLayoutEffect(() => {
    latest.current = handle;
  });
  // Attached as the control mounts (not after paint), so a key pressed right after a key that
  // brought the control on screen already reaches it.
  useLayoutEffect(() => {
    const element = ref.current;
    if (!element) return;
    const listener = (event: Event) => {
      const detail = (event as CustomEvent<BenchActionDetail>).detail;
      if (event.defaultPrevented || !detail) return;
      const said = latest.current(detail.action);
      if (said === undefined) return;
      event.preventDefault();
      event.stopPropagation();
      detail.announce = said;
    };
    element.addEventListener(BENCH_ACTION_EVENT, listener);
    return () => element.removeEventListener(BENCH_ACTION_EVENT, listener);
  }, [ref]);
}
