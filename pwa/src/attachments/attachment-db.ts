// The tablet's own store of attachment files (photos, scanned PDFs), separate from the records
// database: a file's bytes stay here until the server holds them, and a file fetched from the
// server on demand is kept here as a cache. The attachment record itself syncs like any record.
// A file's bytes are written once; its upload progress lives in its own small table, so a retry
// never rewrites megabytes. Screens read the store through the functions here, never its tables.
import Dexie, { type EntityTable } from 'dexie';
import { tabletVault, type DataKeyVault } from '../data/crypto/data-key-vault';
import { sealingMiddleware } from '../data/crypto/sealing-middleware';
import type { TableSealing } from '../data/crypto/value-codec';

export type AttachmentFileState = 'waiting' | 'uploaded' | 'cached';

export interface AttachmentFile {
  /** The attachment record's id. */
  attachmentId: string;
  sha256: string;
  mimeType: string;
  byteSize: number;
  /** The file's bytes (an ArrayBuffer: stored reliably by every browser's IndexedDB). */
  bytes: ArrayBuffer;
  /** Author of the attachment, whose session uploads it. */
  authorId: string;
  createdAt: number;
}

export interface AttachmentTransfer {
  attachmentId: string;
  /** waiting: taken here, not yet on the server; uploaded: the server has it; cached: fetched. */
  state: AttachmentFileState;
  attempts: number;
  lastError: string | null;
  /** Earliest time (ms) of the next upload attempt. */
  nextAttemptAt: number;
}

/** The files' bytes and details are sealed with the tablet's data key; only ids stay plain. */
export const SEALED_ATTACHMENT_TABLES: Readonly<Record<string, TableSealing>> = {
  files: { plain: ['attachmentId', 'sha256'], binary: 'bytes' },
};

export class AttachmentDb extends Dexie {
  files!: EntityTable<AttachmentFile, 'attachmentId'>;
  transfers!: EntityTable<AttachmentTransfer, 'attachmentId'>;

  constructor(name = 'fuselight-attachments', vault: DataKeyVault = tabletVault) {
    super(name);
    this.use(sealingMiddleware(vault, SEALED_ATTACHMENT_TABLES));
    this.version(1).stores({
      files: 'attachmentId, sha256',
      transfers: 'attachmentId, state, nextAttemptAt',
    });
  }
}

/** The stored file as a Blob of its media type, for thumbnails and the viewer. */
export function blobOf(file: Pick<AttachmentFile, 'bytes' | 'mimeType'>): Blob {
  return new Blob([file.bytes], { type: file.mimeType });
}

/** Upload progress of the given files, by attachment id (files with no row are left out). */
export async function transferStates(
  files: AttachmentDb,
  attachmentIds: readonly string[],
): Promise<Map<string, AttachmentTransfer>> {
  const rows = await files.transfers.bulkGet([...attachmentIds]);
  return new Map(
    rows.filter((r): r is NonNullable<typeof r> => !!r).map((r) => [r.attachmentId, r]),
  );
}

/** The file of an attachment as a Blob when this tablet holds it, else null. */
export async function localFileBlob(
  files: AttachmentDb,
  attachmentId: string,
): Promise<Blob | null> {
  const file = await files.files.get(attachmentId);
  return file ? blobOf(file) : null;
}

let defaultDb: AttachmentDb | null = null;

export function getAttachmentDb(): AttachmentDb {
  defaultDb ??= new AttachmentDb();
  return defaultDb;
}
