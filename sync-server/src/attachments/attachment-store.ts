// The attachments repository: stored files ("attachment_blob", one row per content hash) and
// uploads in progress ("attachment_upload", the bytes received so far, row-locked per part). Each
// method runs on the entity manager it is given, so it joins the caller's transaction.
import type { EntityManager } from '@mikro-orm/postgresql';
import { Injectable } from '@nestjs/common';
import { sqlRows } from '../database/sql';

export interface StoredBlobRow {
  byte_size: string;
  mime_type: string;
}

@Injectable()
export class AttachmentStore {
  /** The stored file of this content hash, or undefined. */
  async blob(em: EntityManager, sha256: string): Promise<StoredBlobRow | undefined> {
    const [row] = await sqlRows<StoredBlobRow>(
      em,
      `select "byte_size"::text as "byte_size", "mime_type" from "attachment_blob" where "sha256" = ?`,
      [sha256],
    );
    return row;
  }

  /** Records a stored file (once per hash). */
  async insertBlob(
    em: EntityManager,
    blob: { sha256: string; byteSize: number; mimeType: string; storageKey: string; at: string },
  ): Promise<void> {
    await sqlRows(
      em,
      `insert into "attachment_blob" ("sha256", "byte_size", "mime_type", "storage_key", "stored_at")
       values (?, ?, ?, ?, ?::timestamptz) on conflict ("sha256") do nothing`,
      [blob.sha256, blob.byteSize, blob.mimeType, blob.storageKey, blob.at],
    );
  }

  /** The bytes received so far of the upload of this hash (0 when none has started). */
  async receivedBytes(em: EntityManager, sha256: string): Promise<number> {
    const [upload] = await sqlRows<{ received_bytes: string }>(
      em,
      `select "received_bytes"::text as "received_bytes" from "attachment_upload" where "sha256" = ?`,
      [sha256],
    );
    return Number(upload?.received_bytes ?? 0);
  }

  /**
   * Starts the upload of this hash if none has started, locks its row until the transaction ends
   * (so two processes cannot interleave parts) and returns the bytes received so far.
   */
  async lockUpload(
    em: EntityManager,
    upload: { sha256: string; total: number; mimeType: string; at: string },
  ): Promise<number> {
    await sqlRows(
      em,
      `insert into "attachment_upload" ("sha256", "total_bytes", "received_bytes", "part_count", "mime_type", "started_at", "updated_at")
       values (?, ?, 0, 0, ?, ?::timestamptz, ?::timestamptz) on conflict ("sha256") do nothing`,
      [upload.sha256, upload.total, upload.mimeType, upload.at, upload.at],
    );
    const [row] = await sqlRows<{ received_bytes: string }>(
      em,
      `select "received_bytes"::text as "received_bytes" from "attachment_upload" where "sha256" = ? for update`,
      [upload.sha256],
    );
    return Number(row?.received_bytes ?? 0);
  }

  /** Notes one more part received, up to `received` bytes. */
  async partReceived(
    em: EntityManager,
    sha256: string,
    received: number,
    at: string,
  ): Promise<void> {
    await sqlRows(
      em,
      `update "attachment_upload" set "received_bytes" = ?, "part_count" = "part_count" + 1, "updated_at" = ?::timestamptz where "sha256" = ?`,
      [received, at, sha256],
    );
  }

  /** Forgets the upload (finished, or reset after a hash mismatch). */
  async removeUpload(em: EntityManager, sha256: string): Promise<void> {
    await sqlRows(em, `delete from "attachment_upload" where "sha256" = ?`, [sha256]);
  }
}
