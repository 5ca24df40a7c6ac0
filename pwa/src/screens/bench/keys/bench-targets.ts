// The controls of a Bench step that keys move between (in the order they are on screen), which
// one has the focus, and the one rule for text fields: a key never acts while someone types in
// one. A text field reached by the Bench's own "next control" key is only arrived at: until a
// character is typed there, pedal keys still act (so a pedal never gets stuck in a field).
import { sendBenchAction } from '../../../components/controls/bench-action';

export const TARGET_SELECTOR = [
  '.fl-angle__readout',
  'fieldset.fl-choice',
  '.fl-bench-field input',
  '[data-bench-target]',
].join(', ');

/** Attribute on a text field the Bench moved to, while nothing has been typed in it yet. */
export const ARRIVED = 'data-bench-arrived';

const TEXT_TYPES = new Set(['text', 'search', 'number', 'email', 'tel', 'url', 'password', '']);

export function isTextField(element: Element | null): element is HTMLElement {
  if (!element) return false;
  if (element instanceof HTMLTextAreaElement || element instanceof HTMLSelectElement) return true;
  if (element instanceof HTMLInputElement) return TEXT_TYPES.has(element.type);
  return element instanceof HTMLElement && element.isContentEditable;
}

function visible(element: HTMLElement): boolean {
  if (element.closest('[hidden], [aria-hidden="true"]')) return false;
  if ((element as HTMLButtonElement).disabled) return false;
  return !element.closest('fieldset:disabled') || element.matches('fieldset');
}

export function benchTargets(step: Element | null): HTMLElement[] {
  if (!step) return [];
  return [...step.querySelectorAll<HTMLElement>(TARGET_SELECTOR)].filter(visible);
}

/** The target holding the focus, if the focus is inside one. */
export function focusedTarget(step: Element | null): HTMLElement | null {
  const active = document.activeElement;
  if (!step || !active || !step.contains(active)) return null;
  return (active as HTMLElement).closest<HTMLElement>(TARGET_SELECTOR);
}

/** Puts the focus on a target: a choice group's chosen (or first) answer, a text field arrived at. */
export function focusTarget(target: HTMLElement): void {
  if (target.matches('fieldset')) {
    const radios = [...target.querySelectorAll<HTMLInputElement>('input[type="radio"]')];
    (radios.find((r) => r.checked) ?? radios[0])?.focus();
    return;
  }
  if (isTextField(target)) {
    target.setAttribute(ARRIVED, 'true');
    target.addEventListener('blur', () => target.removeAttribute(ARRIVED), { once: true });
  }
  target.focus();
}

/** Where a target's name is read from, for announcements. */
export function targetName(target: HTMLElement): string {
  if (target.matches('fieldset')) return target.querySelector('legend')?.textContent ?? '';
  const labelledBy = target.getAttribute('aria-labelledby');
  if (labelledBy) return document.getElementById(labelledBy)?.textContent ?? '';
  if (target instanceof HTMLInputElement && target.labels?.[0]) {
    return target.labels[0].textContent ?? '';
  }
  return target.getAttribute('aria-label') ?? target.textContent ?? '';
}

/**
 * A choice group answers the step keys: + chooses the next answer, − the one before (from
 * nothing, + chooses the first). Returns what was chosen, in words.
 */
export function stepChoice(group: HTMLElement, direction: 1 | -1): string | undefined {
  const radios = [...group.querySelectorAll<HTMLInputElement>('input[type="radio"]')];
  if (radios.length === 0) return undefined;
  const current = radios.findIndex((r) => r.checked);
  const next =
    current === -1
      ? direction > 0
        ? 0
        : radios.length - 1
      : Math.min(radios.length - 1, Math.max(0, current + direction));
  const radio = radios[next]!;
  radio.focus();
  if (!radio.checked) radio.click();
  const answer = radio.closest('label')?.textContent ?? radio.value;
  return `${targetName(group)}: ${answer}`;
}

/**
 * Whether a key press in `target` belongs to typing. A text field is being typed in unless the
 * Bench moved there and nothing was typed yet; a character, Backspace or Delete starts typing.
 */
export function keyIsTyping(target: Element | null, event: KeyboardEvent): boolean {
  if (!isTextField(target)) return false;
  if (!target.hasAttribute(ARRIVED)) return true;
  const character = event.key.length === 1 && !event.ctrlKey && !event.metaKey;
  if (character || event.key === 'Backspace' || event.key === 'Delete') {
    target.removeAttribute(ARRIVED);
    return true;
  }
  return event.key === 'Enter' || event.key === 'Tab' || event.key === 'Escape';
}

/** After Enter saves a text field, the field counts as arrived at again: pedal keys act. */
export function enterSaved(target: Element | null): void {
  if (isTextField(target) && target instanceof HTMLInputElement) {
    target.setAttribute(ARRIVED, 'true');
    target.addEventListener('blur', () => target.removeAttribute(ARRIVED), { once: true });
  }
}

export { sendBenchAction };
