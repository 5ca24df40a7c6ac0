// The value codec: how one IndexedDB value is sealed with the tablet's data key. AES-GCM through
// WebCrypto, a fresh random 96-bit IV per value, and the table name and primary key as additional
// data, so a sealed value moved onto another record fails authentication. What indexes need
// (ids, versions, collection names) is copied beside the sealed box in the clear; everything else
// (names, dates of birth, clinic numbers, findings, file bytes) is only inside it.
//
// The sealed box holds the whole value as JSON, followed by the raw bytes of one binary field
// (an attachment's file) when the table has one, so a file is never turned into text.

export const SEALED = '__sealed';

export interface SealedBox {
  /** Format of the box (1: JSON of the value, then the binary field's bytes). */
  v: 1;
  iv: Uint8Array;
  data: ArrayBuffer;
}

/** What of a table's values stays in the clear, and which field (if any) holds raw bytes. */
export interface TableSealing {
  /** Dotted paths kept beside the box (index fields only). */
  plain: readonly string[];
  /** A top-level field holding an ArrayBuffer (kept out of the JSON). */
  binary?: string;
}

/** A value failed authentication: altered, damaged, or moved from another record. */
export class DamagedValueError extends Error {
  override readonly name = 'DamagedValueError';
}

const encoder = new TextEncoder();
const decoder = new TextDecoder();

export function isSealed(
  value: unknown,
): value is Record<string, unknown> & { [SEALED]: SealedBox } {
  return typeof value === 'object' && value !== null && SEALED in value;
}

/** The additional data of a value: its table and primary key. */
export function additionalData(table: string, primaryKey: unknown): Uint8Array<ArrayBuffer> {
  return encoder.encode(`${table}\u0000${JSON.stringify(primaryKey)}`);
}

function readPath(value: Record<string, unknown>, path: string): unknown {
  let at: unknown = value;
  for (const part of path.split('.')) {
    if (typeof at !== 'object' || at === null) return undefined;
    at = (at as Record<string, unknown>)[part];
  }
  return at;
}

function writePath(target: Record<string, unknown>, path: string, item: unknown): void {
  const parts = path.split('.');
  let at = target;
  for (const part of parts.slice(0, -1)) {
    at[part] ??= {};
    at = at[part] as Record<string, unknown>;
  }
  at[parts[parts.length - 1]!] = item;
}

/** Seals one value: the clear index fields beside a box of the whole value. */
export async function sealValue(
  key: CryptoKey,
  spec: TableSealing,
  aad: Uint8Array<ArrayBuffer>,
  value: Record<string, unknown>,
): Promise<Record<string, unknown>> {
  let json: Record<string, unknown> = value;
  let bytes: Uint8Array | null = null;
  if (spec.binary && value[spec.binary] !== undefined) {
    const raw = value[spec.binary];
    bytes = raw instanceof Uint8Array ? raw : new Uint8Array(raw as ArrayBuffer);
    // The field stays in the JSON as null: "the bytes follow" (even when there are none).
    json = { ...value, [spec.binary]: null };
  }
  const text = encoder.encode(JSON.stringify(json));
  const plain = new Uint8Array(4 + text.length + (bytes?.length ?? 0));
  new DataView(plain.buffer).setUint32(0, text.length);
  plain.set(text, 4);
  if (bytes) plain.set(bytes, 4 + text.length);
  const iv = crypto.getRandomValues(new Uint8Array(12));
  const data = await crypto.subtle.encrypt(
    { name: 'AES-GCM', iv, additionalData: aad },
    key,
    plain,
  );
  const sealed: Record<string, unknown> = {};
  for (const path of spec.plain) {
    const item = readPath(value, path);
    if (item !== undefined) writePath(sealed, path, item);
  }
  const box: SealedBox = { v: 1, iv, data };
  sealed[SEALED] = box;
  return sealed;
}

/** Opens a sealed value; a value that fails authentication throws DamagedValueError. */
export async function openValue(
  key: CryptoKey,
  spec: TableSealing,
  aad: Uint8Array<ArrayBuffer>,
  sealed: Record<string, unknown>,
): Promise<Record<string, unknown>> {
  const box = sealed[SEALED] as SealedBox;
  let plain: Uint8Array;
  try {
    plain = new Uint8Array(
      await crypto.subtle.decrypt(
        { name: 'AES-GCM', iv: box.iv as Uint8Array<ArrayBuffer>, additionalData: aad },
        key,
        box.data,
      ),
    );
  } catch {
    throw new DamagedValueError('A stored value failed its integrity check.');
  }
  const length = new DataView(plain.buffer, plain.byteOffset).getUint32(0);
  const value = JSON.parse(decoder.decode(plain.subarray(4, 4 + length))) as Record<
    string,
    unknown
  >;
  if (spec.binary && value[spec.binary] === null) {
    value[spec.binary] = plain.slice(4 + length).buffer;
  }
  return value;
}
