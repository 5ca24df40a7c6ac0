// The hardware share of a person's key slot: a secret the tablet's platform authenticator (its
// screen lock's secure hardware) computes with WebAuthn's PRF extension from a credential made
// for that person and a salt kept in the slot. The authenticator's secret never leaves it, so a
// copied browser profile holds the credential id and the salt but cannot compute the share, and
// a PIN can no longer be tried offline against the copy (docs/threat-model.md). Nothing here
// checks who someone is: the credential is only a way to reach the PRF; its challenge is random
// and no server verifies its signature.

/** Why the authenticator gave no share, in words a person at the tablet can act on. */
export type HardwareFailure = 'refused' | 'unavailable';

export class HardwareShareError extends Error {
  override readonly name = 'HardwareShareError';
  constructor(
    readonly failure: HardwareFailure,
    message: string,
  ) {
    super(message);
  }
}

export interface HardwareEnrolment {
  credentialId: Uint8Array;
  /** The PRF's input (32 random bytes), kept in the slot. */
  salt: Uint8Array;
  /** The PRF's output for that salt (32 bytes): used once to wrap the key, never stored. */
  output: Uint8Array;
}

export interface HardwareShare {
  /** Whether this tablet has a platform authenticator that supports the PRF extension. */
  available(): Promise<boolean>;
  /** Makes a credential for a person and returns its PRF output for a new random salt. */
  enrol(person: { userId: string; name: string; email: string }): Promise<HardwareEnrolment>;
  /** The PRF output of an existing credential for `salt`. */
  evaluate(credentialId: Uint8Array, salt: Uint8Array): Promise<Uint8Array>;
}

/** What the person is told when the authenticator did not answer (refused, timed out, gone). */
export const HARDWARE_REFUSED =
  'This tablet’s screen lock did not confirm you: it was cancelled, timed out, or the key it kept for your PIN is gone (for example after the screen lock was reset). Your PIN alone cannot open the tablet’s data. Sign in with your password while online; nothing on this tablet is lost.';

export const HARDWARE_UNAVAILABLE =
  'This tablet’s screen lock cannot be used from this page. Sign in with your password while online; nothing on this tablet is lost.';

/**
 * The browser's WebAuthn with the PRF extension, loaded at its first use (setting or typing a
 * PIN): the first screen does not carry the WebAuthn code (webauthn-share.ts).
 */
export function webAuthnShare(): HardwareShare {
  let real: Promise<HardwareShare> | null = null;
  const load = () => (real ??= import('./webauthn-share').then((m) => m.browserWebAuthnShare()));
  return {
    available: async () => (await load()).available(),
    enrol: async (person) => (await load()).enrol(person),
    evaluate: async (credentialId, salt) => (await load()).evaluate(credentialId, salt),
  };
}

/** A tablet without a platform authenticator (tests, desks): every slot is a PIN slot. */
export const noHardwareShare: HardwareShare = {
  available: async () => false,
  enrol: async () => {
    throw new HardwareShareError('unavailable', HARDWARE_UNAVAILABLE);
  },
  evaluate: async () => {
    throw new HardwareShareError('unavailable', HARDWARE_UNAVAILABLE);
  },
};
