// The clinic's rule for secrets on a tablet without a platform authenticator (the clinic setting
// `unlockWithoutHardware`, docs/threat-model.md): PIN only, with that risk written on the Fleet
// screen, or a passphrase of a minimum length with some kinds of character. On a tablet whose
// platform authenticator adds its hardware share to the PIN, the rule does not apply.
// Types only: the shared schemas' module (and zod) stay off the first screen's path (the PIN
// lock runs this rule); the classes are listed below in the schema's order.
import type {
  PassphraseCharacterClass,
  UnlockWithoutHardware,
} from '@fuselight/shared/admin-views';

export const DEFAULT_UNLOCK_WITHOUT_HARDWARE: UnlockWithoutHardware = { rule: 'pin-only' };

const CLASS_TESTS: Record<PassphraseCharacterClass, RegExp> = {
  lowercase: /\p{Ll}/u,
  uppercase: /\p{Lu}/u,
  digit: /\p{Nd}/u,
  symbol: /[^\p{L}\p{Nd}\s]/u,
};

/** How each kind of character is named to a person. */
export const CHARACTER_CLASS_WORDS: Record<PassphraseCharacterClass, string> = {
  lowercase: 'a lower-case letter',
  uppercase: 'an upper-case letter',
  digit: 'a digit',
  symbol: 'a symbol (not a letter, digit or space)',
};

// In the schema's order (shared/src/schemas/clinic-settings.schema.ts), which the
// Record types above keep complete.
const PASSPHRASE_CHARACTER_CLASSES = Object.keys(CLASS_TESTS) as PassphraseCharacterClass[];

const characters = (secret: string) => [...secret.normalize('NFC')].length;

function listed(parts: string[]): string {
  if (parts.length <= 1) return parts.join('');
  return `${parts.slice(0, -1).join(', ')} and ${parts.at(-1)}`;
}

/** What the rule asks for, in words: "at least 14 characters with an upper-case letter and a digit". */
export function describeRule(policy: UnlockWithoutHardware): string {
  if (policy.rule === 'pin-only') return 'a PIN of at least 6 digits';
  const classes = PASSPHRASE_CHARACTER_CLASSES.filter((c) => policy.requiredClasses.includes(c));
  const withClasses = classes.length
    ? ` with ${listed(classes.map((c) => CHARACTER_CLASS_WORDS[c]))}`
    : '';
  return `a passphrase of at least ${policy.minLength} characters${withClasses}`;
}

/**
 * What `secret` still lacks under the rule, as a sentence naming each missing part; null when
 * it satisfies the rule (or the rule is PIN only).
 */
export function secretShortfall(secret: string, policy: UnlockWithoutHardware): string | null {
  if (policy.rule === 'pin-only') return null;
  const missing: string[] = [];
  const length = characters(secret);
  if (length < policy.minLength)
    missing.push(`at least ${policy.minLength} characters (it has ${length})`);
  for (const kind of PASSPHRASE_CHARACTER_CLASSES) {
    if (policy.requiredClasses.includes(kind) && !CLASS_TESTS[kind].test(secret))
      missing.push(CHARACTER_CLASS_WORDS[kind]);
  }
  if (missing.length === 0) return null;
  return `This tablet has no hardware key to guard a PIN, so the clinic asks for a passphrase. It still needs ${listed(missing)}.`;
}
