// What an attachment's bytes are, judged by their opening bytes (magic numbers), never by the file
// name: the tablet checks before keeping a file, and the server checks again before storing it.
// Signatures: JPEG FF D8 FF; PNG 89 50 4E 47 0D 0A 1A 0A; PDF "%PDF-"; WebP "RIFF"....“WEBP”;
// HEIC/HEIF an ISO-BMFF "ftyp" box with a heic/heix/mif1/msf1 brand.

export const ACCEPTED_ATTACHMENT_TYPES = [
  'image/jpeg',
  'image/png',
  'image/webp',
  'image/heic',
  'application/pdf',
] as const;
export type AcceptedAttachmentType = (typeof ACCEPTED_ATTACHMENT_TYPES)[number];

/** Bytes needed to recognise every accepted type. */
export const SNIFF_BYTES = 16;

function startsWith(bytes: Uint8Array, signature: readonly number[], offset = 0): boolean {
  if (bytes.length < offset + signature.length) return false;
  return signature.every((byte, i) => bytes[offset + i] === byte);
}

function ascii(text: string): number[] {
  return [...text].map((c) => c.charCodeAt(0));
}

/** The accepted media type these bytes are, or null. */
export function sniffAttachmentType(bytes: Uint8Array): AcceptedAttachmentType | null {
  if (startsWith(bytes, [0xff, 0xd8, 0xff])) return 'image/jpeg';
  if (startsWith(bytes, [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a])) return 'image/png';
  if (startsWith(bytes, ascii('%PDF-'))) return 'application/pdf';
  if (startsWith(bytes, ascii('RIFF')) && startsWith(bytes, ascii('WEBP'), 8)) return 'image/webp';
  if (startsWith(bytes, ascii('ftyp'), 4)) {
    const brand = String.fromCharCode(...bytes.slice(8, 12));
    if (['heic', 'heix', 'mif1', 'msf1', 'heif'].includes(brand)) return 'image/heic';
  }
  return null;
}

/** A guess at what refused bytes are, so the message can say more than "wrong type". */
function lookalike(bytes: Uint8Array): string {
  if (bytes.length === 0) return 'an empty file';
  if (startsWith(bytes, ascii('GIF8'))) return 'a GIF image';
  if (startsWith(bytes, [0x50, 0x4b, 0x03, 0x04])) return 'a ZIP archive or office document';
  if (startsWith(bytes, ascii('BM'))) return 'a BMP image';
  if (startsWith(bytes, [0x49, 0x49, 0x2a, 0x00]) || startsWith(bytes, [0x4d, 0x4d, 0x00, 0x2a]))
    return 'a TIFF image';
  if (startsWith(bytes, ascii('ftyp'), 4)) return 'a video or other media file';
  const head = bytes.slice(0, 64);
  const printable = head.every((b) => b === 9 || b === 10 || b === 13 || (b >= 32 && b < 127));
  if (printable) return 'text';
  return 'a file of an unknown type';
}

export const ATTACHMENT_TYPE_WORDS = 'a photo (JPEG, PNG, WebP or HEIC) or a PDF';

/**
 * Why these opening bytes cannot be attached, or null. With `declared`, the content must also be
 * what the attachment record says it is.
 */
export function attachmentContentProblem(
  bytes: Uint8Array,
  declared?: string | null,
): string | null {
  const found = sniffAttachmentType(bytes);
  if (!found) {
    return `file: the content is ${lookalike(bytes)}, not ${ATTACHMENT_TYPE_WORDS}; only those can be attached`;
  }
  if (declared && declared !== found) {
    return `mimeType: the record says ${declared} but the content is ${found}`;
  }
  return null;
}

export function attachmentStorageKey(sha256: string): string {
  return `sha256/${sha256}`;
}
