import { describe, expect, it } from 'vitest';
import { describeRule, secretShortfall } from './secret-policy';

const rule = {
  rule: 'passphrase' as const,
  minLength: 14,
  requiredClasses: ['lowercase', 'uppercase', 'digit', 'symbol'] as Array<
    'lowercase' | 'uppercase' | 'digit' | 'symbol'
  >,
};

describe('the clinic’s passphrase rule', () => {
  it('accepts anything under PIN only, and names the rule in words', () => {
    expect(secretShortfall('482913', { rule: 'pin-only' })).toBeNull();
    expect(describeRule({ rule: 'pin-only' })).toBe('a PIN of at least 6 digits');
    expect(describeRule({ rule: 'passphrase', minLength: 16, requiredClasses: [] })).toBe(
      'a passphrase of at least 16 characters',
    );
  });

  it('counts characters, not bytes, and knows letters beyond ASCII', () => {
    // 14 characters, of which "Ö" is upper case and "é" lower case; "€" is a symbol.
    expect(secretShortfall('Öl für café €7', rule)).toBeNull();
    expect(secretShortfall('Öl für café 7', rule)).toBe(
      'This tablet has no hardware key to guard a PIN, so the clinic asks for a passphrase. It still needs at least 14 characters (it has 13) and a symbol (not a letter, digit or space).',
    );
  });

  it('does not take a space for a symbol', () => {
    expect(secretShortfall('Harbour lights 7 bay', rule)).toBe(
      'This tablet has no hardware key to guard a PIN, so the clinic asks for a passphrase. It still needs a symbol (not a letter, digit or space).',
    );
  });
});
