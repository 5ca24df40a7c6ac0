// The browser's WebAuthn with the PRF extension: the platform authenticator's share of a
// person's key slot (hardware-share.ts loads this at first use).
import {
  HARDWARE_REFUSED,
  HARDWARE_UNAVAILABLE,
  HardwareShareError,
  type HardwareShare,
} from './hardware-share';

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
export function browserWebAuthnShare(): HardwareShare {
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
