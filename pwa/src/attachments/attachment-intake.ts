// Taking a photo or choosing a file for a visit: the content is checked by its opening bytes
// (never by its name), the size against the server's limit, and its SHA-256 computed; then the
// bytes are kept in the attachment store and the attachment record is written (to the Outbox).
import {
  ATTACHMENT_TYPE_WORDS,
  MAX_ATTACHMENT_BYTES,
  SNIFF_BYTES,
  attachmentContentProblem,
  attachmentStorageKey,
  sniffAttachmentType,
  type RecordFields,
} from '@fuselight/shared';
import type { EditContext, RecordsRepository } from '../data';
import type { AttachmentDb } from './attachment-db';

export class AttachmentInputError extends Error {
  override readonly name = 'AttachmentInputError';
  constructor(
    readonly field: 'file' | 'caption',
    message: string,
  ) {
    super(message);
  }
}

export interface CheckedFile {
  mimeType: string;
  byteSize: number;
  sha256: string;
}

async function bytesOf(blob: Blob): Promise<Uint8Array> {
  return new Uint8Array(await blob.arrayBuffer());
}

export async function sha256Hex(bytes: Uint8Array): Promise<string> {
  const digest = await crypto.subtle.digest('SHA-256', bytes as BufferSource);
  return [...new Uint8Array(digest)].map((b) => b.toString(16).padStart(2, '0')).join('');
}

const mb = (bytes: number) => `${(bytes / 1024 / 1024).toFixed(1)} MB`;

/** Checks a picked file; throws AttachmentInputError naming the field. */
export async function checkFile(file: Blob, maxBytes = MAX_ATTACHMENT_BYTES): Promise<CheckedFile> {
  if (file.size === 0) throw new AttachmentInputError('file', 'file: the file is empty');
  if (file.size > maxBytes) {
    throw new AttachmentInputError(
      'file',
      `file: ${mb(file.size)} is larger than the ${mb(maxBytes)} an attachment may be`,
    );
  }
  const bytes = await bytesOf(file);
  const problem = attachmentContentProblem(bytes.subarray(0, Math.max(SNIFF_BYTES, 64)));
  const mimeType = sniffAttachmentType(bytes);
  if (problem || !mimeType)
    throw new AttachmentInputError('file', problem ?? `file: not ${ATTACHMENT_TYPE_WORDS}`);
  return { mimeType, byteSize: bytes.length, sha256: await sha256Hex(bytes) };
}

export interface AttachInput {
  file: Blob;
  caption: string;
  visit: { id: string; fields: Pick<RecordFields<'visit'>, 'siteId' | 'patientId'> };
  maxBytes?: number;
}

/**
 * Attaches a file to a visit. The bytes are stored before the record is written, so a record on
 * the tablet always has its file; a file whose record failed to save is removed again.
 */
export async function attachFile(
  records: RecordsRepository,
  files: AttachmentDb,
  input: AttachInput,
  ctx: EditContext,
): Promise<string> {
  if (input.caption.length > 500)
    throw new AttachmentInputError('caption', 'caption: at most 500 characters');
  const checked = await checkFile(input.file, input.maxBytes);
  const placeholder = `pending-${crypto.randomUUID()}`;
  // A fresh copy, so the stored buffer is never a view another part of the page still holds.
  const read = new Uint8Array(await input.file.arrayBuffer());
  const bytes = new ArrayBuffer(read.byteLength);
  new Uint8Array(bytes).set(read);
  await files.files.put({
    attachmentId: placeholder,
    ...checked,
    bytes,
    authorId: ctx.authorId,
    createdAt: ctx.nowMs,
  });
  try {
    const id = await records.create(
      'attachment',
      {
        siteId: input.visit.fields.siteId,
        visitId: input.visit.id,
        patientId: input.visit.fields.patientId,
        caption: input.caption.trim() || null,
        mimeType: checked.mimeType,
        byteSize: checked.byteSize,
        sha256: checked.sha256,
        storageKey: attachmentStorageKey(checked.sha256),
      },
      ctx,
    );
    await files.transaction('rw', files.files, files.transfers, async () => {
      const stored = await files.files.get(placeholder);
      if (!stored) return;
      await files.files.delete(placeholder);
      await files.files.put({ ...stored, attachmentId: id });
      await files.transfers.put({
        attachmentId: id,
        state: 'waiting',
        attempts: 0,
        lastError: null,
        nextAttemptAt: ctx.nowMs,
      });
    });
    return id;
  } catch (error) {
    await files.files.delete(placeholder);
    throw error;
  }
}
