// Key slots: the tablet's data key wrapped once per person, with a key derived from that
// person's PIN (or passphrase) by argon2id (hash-wasm, WebAssembly). The derivation's
// parameters are stored in each slot so they can be raised later without locking anyone out.
// A wrong PIN makes the unwrap fail AES-GCM's authentication: nothing about the PIN is stored
// apart from the slot itself (docs/threat-model.md).

export interface KdfParams {
  name: 'argon2id';
  /** Memory in KiB (OWASP's minimum for argon2id: 19 MiB with 2 iterations). */
  memoryKiB: number;
  iterations: number;
  parallelism: number;
}

/** The floor no slot may go under: OWASP's argon2id minimum (19 MiB, 2 iterations, 1 lane). */
export const KDF_FLOOR: KdfParams = {
  name: 'argon2id',
  memoryKiB: 19 * 1024,
  iterations: 2,
  parallelism: 1,
};

/**
 * What new slots use: 32 MiB and 2 passes, about 0.8 s on this project's shared 2-core machine
 * (npm run bench:unlock prints the figure), within the half second to a second aimed at for a
 * mid-range tablet. Stored in each slot, so it can be raised later.
 */
export const DEFAULT_KDF: KdfParams = {
  name: 'argon2id',
  memoryKiB: 32 * 1024,
  iterations: 2,
  parallelism: 1,
};

export type KeySlotKind = 'pin' | 'server';

export interface KeySlot {
  /** `pin:<userId>` for a person's slot, `server` for the slot an online sign-in opens. */
  id: string;
  kind: KeySlotKind;
  /** The person whose PIN opens it (empty for the server slot). */
  userId: string;
  /** Absent for the server slot (its secret is a full-strength key from the server). */
  kdf?: KdfParams & { salt: Uint8Array };
  /**
   * A person's slot that also needs the tablet's platform authenticator: the credential whose
   * PRF output (for `prfSalt`) is the second share. The output itself is never stored.
   */
  hardware?: { credentialId: Uint8Array; prfSalt: Uint8Array };
  iv: Uint8Array;
  wrappedKey: ArrayBuffer;
  createdAt: number;
}

const encoder = new TextEncoder();

export function checkKdf(params: KdfParams): void {
  if (
    params.name !== 'argon2id' ||
    params.memoryKiB < KDF_FLOOR.memoryKiB ||
    params.iterations < KDF_FLOOR.iterations ||
    params.parallelism < 1
  ) {
    throw new Error(
      `Key slot parameters are under the floor: argon2id needs at least ${KDF_FLOOR.memoryKiB} KiB and ${KDF_FLOOR.iterations} iterations`,
    );
  }
}

/** argon2id of a secret: 32 bytes. */
export async function deriveBytes(
  secret: string,
  salt: Uint8Array,
  params: KdfParams,
): Promise<Uint8Array> {
  // hash-wasm (its WebAssembly inlined) loads at the first derivation: setting or typing a PIN.
  const { argon2id } = await import('hash-wasm');
  return argon2id({
    password: secret.normalize('NFC'),
    salt,
    iterations: params.iterations,
    memorySize: params.memoryKiB,
    parallelism: params.parallelism,
    hashLength: 32,
    outputType: 'binary',
  });
}

/**
 * The wrapping key of a slot that needs both shares: HKDF-SHA-256 over the argon2id output of the
 * PIN followed by the authenticator's PRF output, bound to the slot's id. Either share alone
 * gives nothing: the PIN cannot be tried without the hardware, nor the hardware used without it.
 */
async function combinedWrappingKey(
  pinBytes: Uint8Array,
  prfOutput: Uint8Array,
  id: string,
): Promise<CryptoKey> {
  if (prfOutput.byteLength < 32) throw new Error('The hardware share is shorter than 32 bytes');
  const ikm = new Uint8Array(pinBytes.byteLength + prfOutput.byteLength);
  ikm.set(pinBytes, 0);
  ikm.set(prfOutput, pinBytes.byteLength);
  const base = await crypto.subtle.importKey('raw', ikm, 'HKDF', false, ['deriveKey']);
  ikm.fill(0);
  return crypto.subtle.deriveKey(
    {
      name: 'HKDF',
      hash: 'SHA-256',
      salt: new Uint8Array(0),
      info: encoder.encode(`fuselight pin+hardware slot\u0000${id}`),
    },
    base,
    { name: 'AES-GCM', length: 256 },
    false,
    ['wrapKey', 'unwrapKey'],
  );
}

async function wrappingKey(bytes: Uint8Array): Promise<CryptoKey> {
  return crypto.subtle.importKey('raw', bytes as Uint8Array<ArrayBuffer>, 'AES-GCM', false, [
    'wrapKey',
    'unwrapKey',
  ]);
}

/** A new random data key (AES-GCM, 256 bits). Extractable only so it can be wrapped again. */
export function newDataKey(): Promise<CryptoKey> {
  return crypto.subtle.generateKey({ name: 'AES-GCM', length: 256 }, true, [
    'encrypt',
    'decrypt',
  ]) as Promise<CryptoKey>;
}

function slotAad(id: string): Uint8Array<ArrayBuffer> {
  return encoder.encode(`fuselight key slot\u0000${id}`);
}

async function wrap(
  dataKey: CryptoKey,
  kek: CryptoKey,
  id: string,
): Promise<{ iv: Uint8Array; wrappedKey: ArrayBuffer }> {
  const iv = crypto.getRandomValues(new Uint8Array(12));
  const wrappedKey = await crypto.subtle.wrapKey('raw', dataKey, kek, {
    name: 'AES-GCM',
    iv,
    additionalData: slotAad(id),
  });
  return { iv, wrappedKey };
}

async function unwrap(slot: KeySlot, kek: CryptoKey): Promise<CryptoKey | null> {
  try {
    return await crypto.subtle.unwrapKey(
      'raw',
      slot.wrappedKey,
      kek,
      { name: 'AES-GCM', iv: slot.iv as Uint8Array<ArrayBuffer>, additionalData: slotAad(slot.id) },
      { name: 'AES-GCM', length: 256 },
      true,
      ['encrypt', 'decrypt'],
    );
  } catch {
    return null;
  }
}

export function pinSlotId(userId: string): string {
  return `pin:${userId}`;
}

/** Wraps the data key for a person, under their PIN or passphrase. */
export async function makePinSlot(
  dataKey: CryptoKey,
  userId: string,
  secret: string,
  nowMs: number,
  params: KdfParams = DEFAULT_KDF,
): Promise<KeySlot> {
  checkKdf(params);
  const salt = crypto.getRandomValues(new Uint8Array(16));
  const kek = await wrappingKey(await deriveBytes(secret, salt, params));
  const id = pinSlotId(userId);
  return {
    id,
    kind: 'pin',
    userId,
    kdf: { ...params, salt },
    ...(await wrap(dataKey, kek, id)),
    createdAt: nowMs,
  };
}

/** The data key from a person's slot, or null when the PIN is not the one it was made with. */
export async function openPinSlot(slot: KeySlot, secret: string): Promise<CryptoKey | null> {
  if (!slot.kdf || slot.hardware) return null;
  const kek = await wrappingKey(await deriveBytes(secret, slot.kdf.salt, slot.kdf));
  return unwrap(slot, kek);
}

/**
 * Wraps the data key for a person under their PIN and the tablet's hardware share together
 * (`prfOutput`, from hardware-share.ts); only the credential id and the PRF salt are kept.
 */
export async function makeHardwarePinSlot(
  dataKey: CryptoKey,
  userId: string,
  secret: string,
  hardware: { credentialId: Uint8Array; prfSalt: Uint8Array; prfOutput: Uint8Array },
  nowMs: number,
  params: KdfParams = DEFAULT_KDF,
): Promise<KeySlot> {
  checkKdf(params);
  const salt = crypto.getRandomValues(new Uint8Array(16));
  const id = pinSlotId(userId);
  const kek = await combinedWrappingKey(
    await deriveBytes(secret, salt, params),
    hardware.prfOutput,
    id,
  );
  return {
    id,
    kind: 'pin',
    userId,
    kdf: { ...params, salt },
    hardware: { credentialId: hardware.credentialId, prfSalt: hardware.prfSalt },
    ...(await wrap(dataKey, kek, id)),
    createdAt: nowMs,
  };
}

/**
 * The data key from a slot that needs the hardware share, given the PRF output the credential
 * gave for the slot's salt; null when the PIN (or the output) is not the one it was made with.
 */
export async function openHardwarePinSlot(
  slot: KeySlot,
  secret: string,
  prfOutput: Uint8Array,
): Promise<CryptoKey | null> {
  if (!slot.kdf || !slot.hardware) return null;
  const kek = await combinedWrappingKey(
    await deriveBytes(secret, slot.kdf.salt, slot.kdf),
    prfOutput,
    slot.id,
  );
  return unwrap(slot, kek);
}

/** Wraps the data key under a share only the clinic server gives (after an online sign-in). */
export async function makeServerSlot(
  dataKey: CryptoKey,
  share: Uint8Array,
  nowMs: number,
): Promise<KeySlot> {
  const kek = await wrappingKey(share);
  return {
    id: 'server',
    kind: 'server',
    userId: '',
    ...(await wrap(dataKey, kek, 'server')),
    createdAt: nowMs,
  };
}

export async function openServerSlot(slot: KeySlot, share: Uint8Array): Promise<CryptoKey | null> {
  return unwrap(slot, await wrappingKey(share));
}
