// Moves attachment files between the tablet and the server. Upload: HEAD asks how much the server
// holds, then the rest goes up in parts with Content-Range, so a lost connection costs at most
// one part; the file stays on the tablet until the server says it is complete. Download: on
// demand only (never in the first sync), cached in the attachment store. Uploads run on the sync
// runtime's schedule (sync-runtime.ts: after each sync, so on any screen, after a reconnect and
// after a reload), not in a screen.
import { blobOf, type AttachmentDb, type AttachmentFile } from './attachment-db';
import { errorWording, statusWords } from '../net/api-client';

export { transferStates } from './attachment-db';

const transferListeners = new Set<() => void>();

/** Told whenever an upload round or a fetch changed what the store holds (panels re-read). */
export function subscribeTransfers(listener: () => void): () => void {
  transferListeners.add(listener);
  return () => {
    transferListeners.delete(listener);
  };
}

function notifyTransfers(): void {
  for (const listener of [...transferListeners]) listener();
}

export const UPLOAD_PART_BYTES = 512 * 1024;
const FIRST_RETRY_MS = 15_000;
const LONGEST_RETRY_MS = 30 * 60_000;

export interface TransferOptions {
  baseUrl: string;
  /** A usable access token for the person, or null when they must sign in again. */
  tokenFor: (authorId: string) => Promise<string | null>;
  fetch?: typeof fetch;
  now?: () => number;
  partBytes?: number;
}

export type UploadOutcome =
  | { attachmentId: string; status: 'uploaded' }
  | { attachmentId: string; status: 'waiting'; reason: string }
  | { attachmentId: string; status: 'refused'; reason: string };

/** A part of the stored bytes (tolerates a typed-array view as well as an ArrayBuffer). */
function bytesSlice(bytes: ArrayBuffer | ArrayBufferView, start: number, end: number): Uint8Array {
  const view = ArrayBuffer.isView(bytes)
    ? new Uint8Array(bytes.buffer, bytes.byteOffset, bytes.byteLength)
    : new Uint8Array(bytes);
  return view.slice(start, end);
}

/** A refusal in the tablet's one wording (net/api-client.ts). */
async function messageOf(res: Response): Promise<string> {
  let body: unknown = null;
  try {
    body = await res.json();
  } catch {
    // No JSON: the status says it.
  }
  return errorWording(res.status, body);
}

async function uploadOne(file: AttachmentFile, options: TransferOptions): Promise<UploadOutcome> {
  const fetchFn = options.fetch ?? ((input, init) => globalThis.fetch(input, init));
  const token = await options.tokenFor(file.authorId);
  const id = file.attachmentId;
  if (!token) return { attachmentId: id, status: 'waiting', reason: 'sign in again to upload' };
  const headers = { authorization: `Bearer ${token}`, 'x-attachment-id': id };
  const url = `${options.baseUrl}/api/attachments/${file.sha256}`;
  const head = await fetchFn(url, { method: 'HEAD', headers });
  if (head.status === 409)
    return {
      attachmentId: id,
      status: 'waiting',
      reason: 'the attachment record has not synced yet',
    };
  if (!head.ok)
    return {
      attachmentId: id,
      status: head.status >= 500 ? 'waiting' : 'refused',
      reason: statusWords(head.status),
    };
  if (head.headers.get('upload-complete') === '?1') return { attachmentId: id, status: 'uploaded' };
  let offset = Number(head.headers.get('upload-offset') ?? '0');
  const part = options.partBytes ?? UPLOAD_PART_BYTES;
  let restarts = 0;
  while (offset < file.byteSize) {
    const end = Math.min(file.byteSize, offset + part);
    const res = await fetchFn(url, {
      method: 'PUT',
      headers: {
        ...headers,
        'content-type': 'application/octet-stream',
        'content-range': `bytes ${offset}-${end - 1}/${file.byteSize}`,
      },
      body: bytesSlice(file.bytes, offset, end) as BodyInit,
    });
    if (res.status === 409 || res.status === 422) {
      // The server stands elsewhere (another attempt got further, or it threw a bad file away).
      const body = (await res.json().catch(() => ({}))) as { offset?: number; message?: string };
      if (typeof body.offset !== 'number' || ++restarts > 3) {
        return { attachmentId: id, status: 'waiting', reason: body.message ?? 'try again' };
      }
      offset = body.offset;
      continue;
    }
    if (!res.ok) {
      const reason = await messageOf(res);
      return { attachmentId: id, status: res.status >= 500 ? 'waiting' : 'refused', reason };
    }
    const state = (await res.json()) as { offset: number; complete: boolean };
    if (state.complete) return { attachmentId: id, status: 'uploaded' };
    // A server that did not move forward would make this loop forever; try again later instead.
    if (!(state.offset > offset))
      return {
        attachmentId: id,
        status: 'waiting',
        reason: `the server stayed at byte ${state.offset}`,
      };
    offset = state.offset;
  }
  return {
    attachmentId: id,
    status: 'waiting',
    reason: 'the server did not confirm the last part',
  };
}

/** Uploads every waiting file that is due; a file stays until the server has all of it. */
export async function uploadWaitingFiles(
  files: AttachmentDb,
  options: TransferOptions,
): Promise<UploadOutcome[]> {
  const now = options.now ?? (() => Date.now());
  const due = (await files.transfers.where('state').equals('waiting').toArray()).filter(
    (t) => t.nextAttemptAt <= now(),
  );
  const outcomes: UploadOutcome[] = [];
  for (const transfer of due) {
    const file = await files.files.get(transfer.attachmentId);
    if (!file) continue;
    let outcome: UploadOutcome;
    try {
      outcome = await uploadOne(file, options);
    } catch (error) {
      // No network, or the connection dropped mid-part: the next round resumes.
      outcome = {
        attachmentId: file.attachmentId,
        status: 'waiting',
        reason: `no connection (${String(error)})`,
      };
    }
    outcomes.push(outcome);
    if (outcome.status === 'uploaded') {
      await files.transfers.update(file.attachmentId, { state: 'uploaded', lastError: null });
    } else {
      const attempts = transfer.attempts + 1;
      const delay = Math.min(LONGEST_RETRY_MS, FIRST_RETRY_MS * 2 ** (attempts - 1));
      await files.transfers.update(file.attachmentId, {
        attempts,
        lastError: outcome.reason,
        nextAttemptAt: now() + delay,
      });
    }
  }
  if (outcomes.length > 0) notifyTransfers();
  return outcomes;
}

export class AttachmentFetchError extends Error {
  override readonly name = 'AttachmentFetchError';
}

/** The file of an attachment: from the tablet when it is here, otherwise fetched and cached. */
export async function attachmentBlob(
  files: AttachmentDb,
  attachment: { id: string; fields: { sha256: string; mimeType: string; byteSize: number } },
  options: TransferOptions & { authorId: string },
): Promise<Blob> {
  const local = await files.files.get(attachment.id);
  if (local) return blobOf(local);
  const fetchFn = options.fetch ?? ((input, init) => globalThis.fetch(input, init));
  const token = await options.tokenFor(options.authorId);
  if (!token) throw new AttachmentFetchError('Sign in again to see this attachment');
  const res = await fetchFn(`${options.baseUrl}/api/attachments/${attachment.id}`, {
    headers: { authorization: `Bearer ${token}` },
  });
  if (!res.ok) throw new AttachmentFetchError(await messageOf(res));
  const bytes = await res.arrayBuffer();
  await files.transaction('rw', files.files, files.transfers, async () => {
    await files.files.put({
      attachmentId: attachment.id,
      sha256: attachment.fields.sha256,
      mimeType: attachment.fields.mimeType,
      byteSize: attachment.fields.byteSize,
      bytes,
      authorId: options.authorId,
      createdAt: (options.now ?? (() => Date.now()))(),
    });
    await files.transfers.put({
      attachmentId: attachment.id,
      state: 'cached',
      attempts: 0,
      lastError: null,
      nextAttemptAt: 0,
    });
  });
  notifyTransfers();
  return blobOf({ bytes, mimeType: attachment.fields.mimeType });
}
