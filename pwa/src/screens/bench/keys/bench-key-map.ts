// The Bench's keys: every action the clinician can take at the instrument without touching the
// screen, the default keys (what USB foot pedals, presentation clickers and numeric keypads send),
// and a person's own mapping with its rules: one action per key, a clear refusal otherwise.
// Keys are physical keys (KeyboardEvent.code) with modifiers, so a keypad's 8 is the same key
// whether Num Lock is on or off, and a letter is the same key on any keyboard layout.

export const BENCH_ACTIONS = [
  'nextStep',
  'previousStep',
  'nextControl',
  'previousControl',
  'toggleSign',
  'stepUpSmall',
  'stepDownSmall',
  'stepUpMedium',
  'stepDownMedium',
  'stepUpLarge',
  'stepDownLarge',
  'markLost',
  'markBreak',
  'markRecovery',
  'stereoToward',
  'stereoAway',
  'undo',
  'skipStep',
  'syncNow',
  'leaveBench',
] as const;
export type BenchAction = (typeof BENCH_ACTIONS)[number];

export const ACTION_LABELS: Record<BenchAction, string> = {
  nextStep: 'Next step',
  previousStep: 'Previous step',
  nextControl: 'Next control in the step',
  previousControl: 'Previous control in the step',
  toggleSign: 'Change the sign (eso/exo, R/L, excyclo/incyclo, up/down)',
  stepUpSmall: '+0.5',
  stepDownSmall: '−0.5',
  stepUpMedium: '+1 (or the next answer)',
  stepDownMedium: '−1 (or the previous answer)',
  stepUpLarge: '+5',
  stepDownLarge: '−5',
  markLost: 'Mark “picture lost” at the current value',
  markBreak: 'Mark “break” at the current value',
  markRecovery: 'Mark “recovery” at the current value',
  stereoToward: 'Stereo trial: patient says toward',
  stereoAway: 'Stereo trial: patient says away',
  undo: 'Undo the last entry',
  skipStep: 'Skip the step (then choose the reason)',
  syncNow: 'Sync now',
  leaveBench: 'Leave the Bench',
};

/** A person's mapping: the keys of each action (a key serves one action at most). */
export type BenchKeyMap = Record<BenchAction, readonly string[]>;

/**
 * Clickers send PageUp / PageDown (and arrows on some), B or period for "blank screen" and F5 to
 * start a show; foot pedals are sold sending PageUp / PageDown or arrows. The keypad is laid out
 * by rows: 7 8 9 add 0.5, 1, 5; 1 2 3 take them away; 4 and 6 move between controls.
 */
export const DEFAULT_BENCH_KEYS: BenchKeyMap = {
  nextStep: ['NumpadAdd', 'BracketRight'],
  previousStep: ['NumpadSubtract', 'BracketLeft'],
  nextControl: ['ArrowRight', 'Numpad6'],
  previousControl: ['ArrowLeft', 'Numpad4'],
  toggleSign: ['Numpad5', 'KeyS'],
  stepUpSmall: ['Numpad7', 'Alt+ArrowUp'],
  stepDownSmall: ['Numpad1', 'Alt+ArrowDown'],
  stepUpMedium: ['PageDown', 'ArrowUp', 'Numpad8'],
  stepDownMedium: ['PageUp', 'ArrowDown', 'Numpad2'],
  stepUpLarge: ['Numpad9', 'Shift+ArrowUp'],
  stepDownLarge: ['Numpad3', 'Shift+ArrowDown'],
  markLost: ['F5', 'NumpadEnter', 'KeyL'],
  markBreak: ['KeyB', 'Numpad0'],
  markRecovery: ['Period', 'NumpadDecimal', 'KeyR'],
  stereoToward: ['NumpadMultiply', 'KeyT'],
  stereoAway: ['NumpadDivide', 'KeyA'],
  undo: ['Backspace', 'Control+KeyZ'],
  skipStep: ['KeyK'],
  syncNow: ['KeyU'],
  leaveBench: ['KeyQ'],
};

/** Actions that repeat while the key is held (stepping a value, moving between controls). */
export const REPEATING_ACTIONS: ReadonlySet<BenchAction> = new Set([
  'nextControl',
  'previousControl',
  'stepUpSmall',
  'stepDownSmall',
  'stepUpMedium',
  'stepDownMedium',
  'stepUpLarge',
  'stepDownLarge',
]);

const MODIFIERS = ['Control', 'Alt', 'Shift', 'Meta'] as const;
const MODIFIER_CODES = new Set([
  'ControlLeft',
  'ControlRight',
  'AltLeft',
  'AltRight',
  'ShiftLeft',
  'ShiftRight',
  'MetaLeft',
  'MetaRight',
  'CapsLock',
  'NumLock',
]);

/** The key of a keyboard event as a mapping names it ("Shift+ArrowUp"); null for a bare modifier. */
export function keyOfEvent(event: {
  code: string;
  key?: string;
  ctrlKey: boolean;
  altKey: boolean;
  shiftKey: boolean;
  metaKey: boolean;
}): string | null {
  // Some clickers and virtual keyboards send no code; fall back to the key's name.
  const code = event.code || (event.key && event.key.length > 1 ? event.key : '');
  if (!code || MODIFIER_CODES.has(code)) return null;
  const held = [event.ctrlKey, event.altKey, event.shiftKey, event.metaKey];
  const prefix = MODIFIERS.filter((_, i) => held[i]).map((m) => `${m}+`);
  return `${prefix.join('')}${code}`;
}

const NAMED: Record<string, string> = {
  ArrowUp: '↑',
  ArrowDown: '↓',
  ArrowLeft: '←',
  ArrowRight: '→',
  PageUp: 'Page Up',
  PageDown: 'Page Down',
  Period: '.',
  Comma: ',',
  BracketLeft: '[',
  BracketRight: ']',
  Backspace: 'Backspace',
  Enter: 'Enter',
  NumpadEnter: 'Keypad Enter',
  NumpadAdd: 'Keypad +',
  NumpadSubtract: 'Keypad −',
  NumpadMultiply: 'Keypad ×',
  NumpadDivide: 'Keypad ÷',
  NumpadDecimal: 'Keypad .',
  Space: 'Space',
  Escape: 'Esc',
  Minus: '-',
  Equal: '=',
  Slash: '/',
  Semicolon: ';',
  Quote: "'",
  Backquote: '`',
  Backslash: '\\',
};

const SHORT: Record<string, string> = {
  PageUp: 'PgUp',
  PageDown: 'PgDn',
  Backspace: 'Bksp',
  NumpadEnter: 'Kp Enter',
  NumpadAdd: 'Kp+',
  NumpadSubtract: 'Kp−',
  NumpadMultiply: 'Kp×',
  NumpadDivide: 'Kp÷',
  NumpadDecimal: 'Kp.',
};

/** A key in as few characters as the legend has room for: "PgDn", "Kp8", "Shift+↑". */
export function shortKeyLabel(key: string): string {
  const parts = key.split('+');
  const code = parts.pop() ?? '';
  const name = SHORT[code] ?? (/^Numpad\d$/.test(code) ? `Kp${code.slice(6)}` : null);
  if (name === null) return keyLabel(key);
  return [...parts.map((m) => (m === 'Control' ? 'Ctrl' : m)), name].join('+');
}

/** A key in words for the legend and the You screen: "Shift+↑", "Keypad 8", "B", "Page Down". */
export function keyLabel(key: string): string {
  const parts = key.split('+');
  const code = parts.pop() ?? '';
  const name =
    NAMED[code] ??
    (/^Key[A-Z]$/.test(code)
      ? code.slice(3)
      : /^Digit\d$/.test(code)
        ? code.slice(5)
        : /^Numpad\d$/.test(code)
          ? `Keypad ${code.slice(6)}`
          : code);
  const mods = parts.map((m) => (m === 'Control' ? 'Ctrl' : m));
  return [...mods, name].join('+');
}

/** Which action a key does in this mapping, if any. */
export function actionOfKey(map: BenchKeyMap, key: string): BenchAction | null {
  for (const action of BENCH_ACTIONS) if (map[action].includes(key)) return action;
  return null;
}

/** Keys a text field needs for typing: never given to an action. */
const TYPING_KEYS = new Set(['Tab', 'Enter', 'Space', 'Escape']);

export type RemapResult = { ok: true; map: BenchKeyMap } | { ok: false; problem: string };

/** Gives `key` to `action` too; refused when another action has it or typing needs it. */
export function addKey(map: BenchKeyMap, action: BenchAction, key: string): RemapResult {
  if (TYPING_KEYS.has(key)) {
    return {
      ok: false,
      problem: `${keyLabel(key)} cannot be a Bench key: it moves between and presses the buttons on screen.`,
    };
  }
  const holder = actionOfKey(map, key);
  if (holder === action) {
    return { ok: false, problem: `${keyLabel(key)} already does “${ACTION_LABELS[action]}”.` };
  }
  if (holder) {
    return {
      ok: false,
      problem: `${keyLabel(key)} already does “${ACTION_LABELS[holder]}”. One key does one thing: remove it there first.`,
    };
  }
  return { ok: true, map: { ...map, [action]: [...map[action], key] } };
}

export function removeKey(map: BenchKeyMap, action: BenchAction, key: string): BenchKeyMap {
  return { ...map, [action]: map[action].filter((k) => k !== key) };
}

/**
 * A stored mapping read back: unknown actions and malformed entries are dropped, an action the
 * stored copy does not name keeps its default keys (a newer app may add actions), and a key that
 * two actions claim stays with the first.
 */
export function mappingFromStored(stored: unknown): BenchKeyMap {
  if (stored === null || typeof stored !== 'object') return DEFAULT_BENCH_KEYS;
  const record = stored as Record<string, unknown>;
  const taken = new Set<string>();
  const map = {} as Record<BenchAction, readonly string[]>;
  for (const action of BENCH_ACTIONS) {
    const keys = Array.isArray(record[action])
      ? (record[action] as unknown[]).filter((k): k is string => typeof k === 'string')
      : [...DEFAULT_BENCH_KEYS[action]];
    map[action] = keys.filter((k) => {
      if (taken.has(k)) return false;
      taken.add(k);
      return true;
    });
  }
  return map;
}

export function isDefaultMapping(map: BenchKeyMap): boolean {
  return BENCH_ACTIONS.every(
    (action) => map[action].join('|') === DEFAULT_BENCH_KEYS[action].join('|'),
  );
}

/** A person's Bench preferences on this tablet. */
export interface BenchKeyPreferences {
  keys: BenchKeyMap;
  /** Say each recorded value aloud (speechSynthesis); off unless the person turns it on. */
  speak: boolean;
  /** Show the key legend under the step. */
  legend: boolean;
}

export const DEFAULT_BENCH_KEY_PREFERENCES: BenchKeyPreferences = {
  keys: DEFAULT_BENCH_KEYS,
  speak: false,
  legend: true,
};

export function preferencesFromStored(stored: unknown): BenchKeyPreferences {
  const record = (stored ?? {}) as Record<string, unknown>;
  return {
    keys: mappingFromStored(record.keys),
    speak: record.speak === true,
    legend: record.legend !== false,
  };
}
