// A platform authenticator for unit tests: each credential holds a random secret, and its "PRF"
// is HMAC-SHA-256 of the salt under it, as a real authenticator's hmac-secret is. Credentials can
// be removed and prompts cancelled, as a person or a screen-lock reset would. The end-to-end test
// (pwa/e2e/hardware-key.e2e.ts) uses Chromium's virtual authenticator instead.
import { HARDWARE_REFUSED, HardwareShareError, type HardwareShare } from './hardware-share';

export interface FakeHardware extends HardwareShare {
  /** The ids of the credentials the authenticator holds. */
  credentialIds(): Uint8Array[];
  remove(credentialId: Uint8Array): void;
  /** The next prompt is cancelled by the person. */
  cancelNext(): void;
  /** Every PRF output handed out, to check none of them is stored. */
  outputs: Uint8Array[];
  prompts: number;
}

const hex = (bytes: Uint8Array) =>
  Array.from(bytes, (b) => b.toString(16).padStart(2, '0')).join('');

export function fakeHardware(options: { prf?: boolean } = {}): FakeHardware {
  const secrets = new Map<string, CryptoKey>();
  let cancel = false;
  const outputs: Uint8Array[] = [];
  const prompt = () => {
    fake.prompts += 1;
    if (cancel) {
      cancel = false;
      throw new HardwareShareError('refused', HARDWARE_REFUSED);
    }
  };
  const prf = async (credentialId: Uint8Array, salt: Uint8Array) => {
    const secret = secrets.get(hex(credentialId));
    if (!secret) throw new HardwareShareError('refused', HARDWARE_REFUSED);
    const output = new Uint8Array(
      await crypto.subtle.sign('HMAC', secret, salt as Uint8Array<ArrayBuffer>),
    );
    outputs.push(output.slice());
    return output;
  };
  const fake: FakeHardware = {
    outputs,
    prompts: 0,
    available: async () => true,
    async enrol() {
      prompt();
      if (options.prf === false) throw new HardwareShareError('unavailable', 'No PRF here.');
      const credentialId = crypto.getRandomValues(new Uint8Array(16));
      secrets.set(
        hex(credentialId),
        await crypto.subtle.generateKey({ name: 'HMAC', hash: 'SHA-256' }, false, ['sign']),
      );
      const salt = crypto.getRandomValues(new Uint8Array(32));
      return { credentialId, salt, output: await prf(credentialId, salt) };
    },
    async evaluate(credentialId, salt) {
      prompt();
      return prf(credentialId, salt);
    },
    credentialIds: () => [...secrets.keys()].map((id) => Uint8Array.from(Buffer.from(id, 'hex'))),
    remove: (credentialId) => void secrets.delete(hex(credentialId)),
    cancelNext: () => {
      cancel = true;
    },
  };
  return fake;
}
