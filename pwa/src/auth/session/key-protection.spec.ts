import { describe, expect, it } from 'vitest';
import { keyProtectionOf } from './key-protection';
import { secretKindOf } from './pin-lock';

const kinds = (map: Record<string, 'pin' | 'passphrase'>) => (userId: string) =>
  map[userId] ?? null;

describe('how the tablet reports its data key’s protection', () => {
  it('tells a PIN of digits from a passphrase', () => {
    expect(secretKindOf('482913')).toBe('pin');
    expect(secretKindOf('4829130057')).toBe('pin');
    expect(secretKindOf('harbour lights 7')).toBe('passphrase');
  });

  it('is as weak as its weakest slot: one PIN makes the tablet PIN-only', () => {
    expect(keyProtectionOf({ pinUserIds: [], server: false }, kinds({}))).toBe('unprotected');
    expect(keyProtectionOf({ pinUserIds: [], server: true }, kinds({}))).toBe('server-only');
    expect(
      keyProtectionOf(
        { pinUserIds: ['a', 'b'], server: true },
        kinds({ a: 'passphrase', b: 'pin' }),
      ),
    ).toBe('pin-only');
    expect(
      keyProtectionOf(
        { pinUserIds: ['a', 'b'], server: true },
        kinds({ a: 'passphrase', b: 'passphrase' }),
      ),
    ).toBe('passphrase');
    // A slot made before the kind was noted counts as a PIN.
    expect(
      keyProtectionOf({ pinUserIds: ['a', 'old'], server: true }, kinds({ a: 'passphrase' })),
    ).toBe('pin-only');
  });

  it('is hardware-backed only when every person’s slot needs the hardware share', () => {
    expect(
      keyProtectionOf(
        { pinUserIds: ['a', 'b'], hardwareUserIds: ['a', 'b'], server: true },
        kinds({ a: 'pin', b: 'pin' }),
      ),
    ).toBe('hardware');
    // One person's slot without it (set before, or on a moment the authenticator had no PRF).
    expect(
      keyProtectionOf(
        { pinUserIds: ['a', 'b'], hardwareUserIds: ['a'], server: true },
        kinds({ a: 'pin', b: 'pin' }),
      ),
    ).toBe('pin-only');
    expect(
      keyProtectionOf(
        { pinUserIds: ['a', 'b'], hardwareUserIds: ['a'], server: true },
        kinds({ a: 'pin', b: 'passphrase' }),
      ),
    ).toBe('passphrase');
  });
});
