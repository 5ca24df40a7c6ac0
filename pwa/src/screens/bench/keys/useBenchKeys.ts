// The Bench's one keydown listener: turns a key into the person's action for it (their mapping
// on this tablet), never while a text field is being typed in, and lets every other key do what
// it does on the page (Tab, Enter and Space still move between and press the buttons).
import { useEffect, useLayoutEffect, useRef } from 'react';
import { flushSync } from 'react-dom';
import {
  type BenchAction,
  type BenchKeyMap,
  REPEATING_ACTIONS,
  actionOfKey,
  keyOfEvent,
} from './bench-key-map';
import { enterSaved, isTextField, keyIsTyping } from './bench-targets';

export function useBenchKeys(options: {
  keys: BenchKeyMap;
  /** Off while the Bench is not the page in view. */
  active: boolean;
  onAction: (action: BenchAction) => void;
}): void {
  const latest = useRef(options);
  useLayoutEffect(() => {
    latest.current = options;
  });
  useEffect(() => {
    if (!options.active) return;
    const listener = (event: KeyboardEvent) => {
      if (event.defaultPrevented || event.isComposing) return;
      const target = event.target instanceof Element ? event.target : null;
      // A dialog (the sign-in prompt, a confirmation) keeps its own keys.
      if (target?.closest('[role="dialog"], [role="alertdialog"], ion-modal, ion-alert')) return;
      if (keyIsTyping(target, event)) {
        if (event.key === 'Enter') enterSaved(target);
        return;
      }
      const key = keyOfEvent(event);
      if (key === null) return;
      const action = actionOfKey(latest.current.keys, key);
      if (action === null) return;
      // Buttons and answers keep Space and Enter; a text field keeps its own keys once typing.
      if (isTextField(target) && !target.hasAttribute('data-bench-arrived')) return;
      event.preventDefault();
      event.stopPropagation();
      if (event.repeat && !REPEATING_ACTIONS.has(action)) return;
      // The control's change is drawn before this key returns. The action reaches the control
      // as a custom DOM event, which React would otherwise draw later (at default priority), so
      // a quick second press would step from the value before the first and one press be lost.
      flushSync(() => latest.current.onAction(action));
    };
    window.addEventListener('keydown', listener, true);
    return () => window.removeEventListener('keydown', listener, true);
  }, [options.active]);
}
