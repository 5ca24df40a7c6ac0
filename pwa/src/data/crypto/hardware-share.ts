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

/** WebAuthn refuses IP addresses as relying parties: such an origin has no hardware share. */
function isIpHost(hostname: string): boolean {
  return /^\d{1,3}(\.\d{1,3}){3}$/.test(hostname) || hostname.startsWith('[');
}

const bytes = (buffer: ArrayBuffer | ArrayBufferView | undefined): Uint8Array | null => {
  if (!buffer) return null;
  return buffer instanceof ArrayBuffer
    ? new Uint8Array(buffer)
    : new Uint8Array(buffer.buffer, buffer.byteOffset, buffer.byteLength).slice();
};

type PrfResults = { enabled?: boolean; results?: { first?: BufferSource } };

function prfOf(credential: Credential | null): PrfResults | undefined {
  const results = (credential as PublicKeyCredential | null)?.getClientExtensionResults() as
    { prf?: PrfResults } | undefined;
  return results?.prf;
}

function failure(error: unknown): HardwareShareError {
  if (error instanceof HardwareShareError) return error;
  const name = (error as { name?: string } | null)?.name;
  // NotAllowedError covers a cancelled prompt, a timeout and a credential the authenticator no
  // longer holds: WebAuthn does not say which, so the words cover all three.
  if (name === 'NotAllowedError' || name === 'AbortError')
    return new HardwareShareError('refused', HARDWARE_REFUSED);
  return new HardwareShareError('unavailable', HARDWARE_UNAVAILABLE);
}

const TIMEOUT_MS = 60_000;

/** The browser's WebAuthn with the PRF extension (Chromium, Safari, Firefox on current systems). */
export function webAuthnShare(): HardwareShare {
  const evaluate = async (credentialId: Uint8Array, salt: Uint8Array): Promise<Uint8Array> => {
    let credential: Credential | null;
    try {
      credential = await navigator.credentials.get({
        publicKey: {
          challenge: crypto.getRandomValues(new Uint8Array(32)),
          allowCredentials: [{ type: 'public-key', id: credentialId as Uint8Array<ArrayBuffer> }],
          userVerification: 'required',
          timeout: TIMEOUT_MS,
          extensions: { prf: { eval: { first: salt as Uint8Array<ArrayBuffer> } } },
        } as PublicKeyCredentialRequestOptions,
      });
    } catch (error) {
      throw failure(error);
    }
    const output = bytes(prfOf(credential)?.results?.first);
    if (!output) throw new HardwareShareError('unavailable', HARDWARE_UNAVAILABLE);
    return output;
  };

  return {
    async available() {
      if (typeof window === 'undefined' || typeof PublicKeyCredential === 'undefined') return false;
      if (!window.isSecureContext || isIpHost(window.location.hostname)) return false;
      try {
        if (!(await PublicKeyCredential.isUserVerifyingPlatformAuthenticatorAvailable()))
          return false;
        const capabilities = await (
          PublicKeyCredential as unknown as {
            getClientCapabilities?: () => Promise<Record<string, boolean>>;
          }
        ).getClientCapabilities?.();
        // A browser that cannot say is tried: enrol() finds out and the PIN slot is the fallback.
        return capabilities?.['extension:prf'] !== false;
      } catch {
        return false;
      }
    },

    async enrol(person) {
      const salt = crypto.getRandomValues(new Uint8Array(32));
      let credential: Credential | null;
      try {
        credential = await navigator.credentials.create({
          publicKey: {
            rp: { name: 'Fuselight' },
            user: {
              id: new TextEncoder().encode(person.userId).slice(0, 64),
              name: person.email,
              displayName: person.name,
            },
            challenge: crypto.getRandomValues(new Uint8Array(32)),
            pubKeyCredParams: [
              { type: 'public-key', alg: -7 },
              { type: 'public-key', alg: -257 },
            ],
            authenticatorSelection: {
              authenticatorAttachment: 'platform',
              userVerification: 'required',
              residentKey: 'discouraged',
            },
            attestation: 'none',
            timeout: TIMEOUT_MS,
            extensions: { prf: { eval: { first: salt } } },
          } as PublicKeyCredentialCreationOptions,
        });
      } catch (error) {
        throw failure(error);
      }
      if (!credential) throw new HardwareShareError('unavailable', HARDWARE_UNAVAILABLE);
      const credentialId = new Uint8Array((credential as PublicKeyCredential).rawId);
      const prf = prfOf(credential);
      if (!prf?.enabled && !prf?.results?.first)
        throw new HardwareShareError('unavailable', HARDWARE_UNAVAILABLE);
      // Some authenticators only evaluate the PRF when asked for an assertion.
      const output = bytes(prf.results?.first) ?? (await evaluate(credentialId, salt));
      return { credentialId, salt, output };
    },

    evaluate,
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
