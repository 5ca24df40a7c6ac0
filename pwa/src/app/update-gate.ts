// When a new version of the app may be put in place. Activating the waiting service worker
// reloads the page, so it is done only at a moment when no field is being typed: focus is not in
// a text input, text area or editable element (a select saves on change), and no form holds unsaved edits
// (unsaved-edits.ts). Everything saved is already in IndexedDB with its Outbox entry, online or
// not, and a Dexie schema upgrade carries it into the new version (db.ts, DEXIE_SCHEMA_HISTORY);
// docs/sync-protocol.md, Records a device does not know, has the rule.
import { unsavedEdits, type UnsavedEdits } from './unsaved-edits';

/** Input types that take no typing: pressing one is not an edit under way. */
const NOT_TYPED = new Set([
  'button',
  'submit',
  'reset',
  'checkbox',
  'radio',
  'range',
  'color',
  'file',
  'image',
  'hidden',
]);

/** True when `element` is a field a person types into. */
export function isTypingTarget(element: Element | null): boolean {
  if (!element) return false;
  const tag = element.tagName;
  if (tag === 'TEXTAREA') return true;
  if (tag === 'INPUT') return !NOT_TYPED.has((element as HTMLInputElement).type.toLowerCase());
  if ((element as HTMLElement).isContentEditable) return true;
  // jsdom and older engines do not compute isContentEditable; read the attribute too.
  const editable = element.closest('[contenteditable]');
  return editable !== null && editable.getAttribute('contenteditable') !== 'false';
}

/** The focused element, looking into shadow roots (Ionic's inputs keep theirs inside one). */
function focusedElement(doc: Document): Element | null {
  let active: Element | null = doc.activeElement;
  while (active?.shadowRoot?.activeElement) active = active.shadowRoot.activeElement;
  return active;
}

export interface UpdateGateEnvironment {
  document: Document;
  unsaved: UnsavedEdits;
  /** How a check is put after the focus change under way (default: a zero timeout). */
  later: (check: () => void) => void;
  /** How often to look again anyway, in ms (default 2 s); focus can move without an event. */
  intervalMs: number;
}

/** The rule: no field has focus and no form holds unsaved edits. */
export function isSafeMomentToUpdate(
  doc: Document = document,
  unsaved: UnsavedEdits = unsavedEdits,
): boolean {
  return !isTypingTarget(focusedElement(doc)) && !unsaved.any();
}

export interface PendingUpdate {
  /** True until the update was applied or cancelled. */
  readonly waiting: boolean;
  cancel(): void;
}

/**
 * Applies an update (`apply`, e.g. the service worker's updateServiceWorker(true)) now if this is
 * a safe moment, else at the first safe moment after: when focus leaves a field, when the last
 * unsaved edit is saved, or at the next interval check.
 */
export function applyUpdateWhenSafe(
  apply: () => unknown,
  environment: Partial<UpdateGateEnvironment> = {},
): PendingUpdate {
  const doc = environment.document ?? document;
  const unsaved = environment.unsaved ?? unsavedEdits;
  const later = environment.later ?? ((check: () => void) => void setTimeout(check, 0));
  const intervalMs = environment.intervalMs ?? 2_000;
  let waiting = true;
  const stop: Array<() => void> = [];
  const finish = () => {
    waiting = false;
    for (const undo of stop.splice(0)) undo();
  };
  const check = () => {
    if (!waiting || !isSafeMomentToUpdate(doc, unsaved)) return;
    finish();
    void apply();
  };
  const pending: PendingUpdate = {
    get waiting() {
      return waiting;
    },
    cancel: finish,
  };
  check();
  if (!waiting) return pending;
  // Focus moving from one field to the next passes through the body; look once it has landed.
  const onFocusOut = () => later(check);
  doc.addEventListener('focusout', onFocusOut, true);
  stop.push(() => doc.removeEventListener('focusout', onFocusOut, true));
  stop.push(unsaved.subscribe(() => later(check)));
  const timer = setInterval(check, intervalMs);
  stop.push(() => clearInterval(timer));
  return pending;
}
