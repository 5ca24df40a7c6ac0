// Attachment bytes: resumable, idempotent upload by content hash, and download by the attachment
// record's id. The attachment record (synced like any record) decides scope: its siteId must be
// one of the caller's sites, exactly as for the record itself. Parts of an upload are kept as
// objects under uploads/<sha256>/ with their progress in attachment_upload (row-locked per part,
// so two processes cannot interleave); the last part assembles, hash-checks and stores the file
// under its content key, once per hash however many records share it.
import { createHash } from 'node:crypto';
import type { Readable } from 'node:stream';
import { EntityManager } from '@mikro-orm/postgresql';
import {
  BadRequestException,
  ConflictException,
  HttpException,
  HttpStatus,
  Inject,
  Injectable,
  NotFoundException,
  PayloadTooLargeException,
  UnprocessableEntityException,
} from '@nestjs/common';
import type { Request } from 'express';
import {
  attachmentContentProblem,
  attachmentStorageKey,
  type RecordFields,
} from '@fuselight/shared';
import { AuditService } from '../audit/audit.service';
import type { AuthUser } from '../auth/auth-user';
import { assertSiteAccess } from '../auth/scope';
import { CLOCK, type Clock } from '../common/clock.provider';
import { APP_CONFIG, type AppConfig } from '../config/app-config';
import { RecordAccess } from '../letters/record-access';
import type { StoredRecord } from '../records/stored-record';
import { AttachmentStore, type StoredBlobRow } from './attachment-store';
import { OBJECT_STORE, type ObjectStore } from './object-store';
import { parseContentRange, readUploadBody } from './upload-body';

const SHA256 = /^[0-9a-f]{64}$/;
const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

export interface UploadState {
  sha256: string;
  /** Bytes the server holds; the next part starts here. */
  offset: number;
  total: number;
  complete: boolean;
}

const partKey = (sha256: string, start: number) =>
  `uploads/${sha256}/${String(start).padStart(12, '0')}`;
const mb = (bytes: number) => `${(bytes / 1024 / 1024).toFixed(1)} MB`;

@Injectable()
export class AttachmentsService {
  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(CLOCK) private readonly clock: Clock,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
    @Inject(RecordAccess) private readonly records: RecordAccess,
    @Inject(OBJECT_STORE) private readonly store: ObjectStore,
    @Inject(AttachmentStore) private readonly attachments: AttachmentStore,
    @Inject(AuditService) private readonly audit: AuditService,
  ) {}

  /** The attachment record the caller names, checked against the hash and the caller's sites. */
  private async recordFor(
    user: AuthUser,
    attachmentId: string | undefined,
    sha256: string,
  ): Promise<StoredRecord> {
    if (!SHA256.test(sha256))
      throw new BadRequestException('sha256: must be 64 lowercase hexadecimal characters');
    if (!attachmentId || !UUID.test(attachmentId)) {
      throw new BadRequestException(
        'x-attachment-id: send the id of the attachment record this file belongs to',
      );
    }
    const record = await this.records.get('attachment', attachmentId);
    if (!record) {
      throw new ConflictException(
        `attachment ${attachmentId} is not on the server yet; sync the attachment record first, then upload (the file stays on the tablet)`,
      );
    }
    assertSiteAccess(user, record.siteId);
    const fields = record.fields as Partial<RecordFields<'attachment'>>;
    if (fields.sha256 !== sha256) {
      throw new BadRequestException(
        `sha256: attachment ${attachmentId} is recorded with a different hash (${fields.sha256 ?? 'none'})`,
      );
    }
    const total = Number(fields.byteSize);
    if (total > this.config.attachmentMaxBytes) {
      throw new PayloadTooLargeException(
        `file: ${mb(total)} is larger than the ${mb(this.config.attachmentMaxBytes)} the server accepts for an attachment`,
      );
    }
    return record;
  }

  private storedBlob(sha256: string): Promise<StoredBlobRow | undefined> {
    return this.attachments.blob(this.em.fork(), sha256);
  }

  async state(
    user: AuthUser,
    sha256: string,
    attachmentId: string | undefined,
  ): Promise<UploadState> {
    const record = await this.recordFor(user, attachmentId, sha256);
    const total = Number((record.fields as { byteSize: number }).byteSize);
    if (await this.storedBlob(sha256)) {
      await this.markUploaded(user, record);
      return { sha256, offset: total, total, complete: true };
    }
    const offset = await this.attachments.receivedBytes(this.em.fork(), sha256);
    return { sha256, offset, total, complete: false };
  }

  async upload(
    user: AuthUser,
    sha256: string,
    attachmentId: string | undefined,
    req: Request,
  ): Promise<UploadState & { created: boolean }> {
    const record = await this.recordFor(user, attachmentId, sha256);
    const fields = record.fields as RecordFields<'attachment'>;
    const total = Number(fields.byteSize);
    const range = parseContentRange(req.headers['content-range']);
    if (range && range.total !== total) {
      throw new BadRequestException(
        `content-range: total ${range.total} is not the attachment record's byteSize ${total}`,
      );
    }
    if (await this.storedBlob(sha256)) {
      // Idempotent: the same content is already stored (perhaps from another record).
      req.resume();
      await this.markUploaded(user, record);
      return { sha256, offset: total, total, complete: true, created: false };
    }
    const start = range?.start ?? 0;
    const expected = range ? range.end - range.start + 1 : total - start;
    const body = await readUploadBody(
      req,
      expected,
      `body: more than the ${expected} bytes this part declares`,
    );
    if (body.length !== expected) {
      throw new BadRequestException(
        `body: ${body.length} bytes arrived but this part declares ${expected}; send the part again`,
      );
    }
    if (start === 0) {
      const problem = attachmentContentProblem(body.subarray(0, 64), fields.mimeType);
      if (problem) throw new HttpException(problem, HttpStatus.UNSUPPORTED_MEDIA_TYPE);
    }

    const outcome = await this.em.fork().transactional(async (em) => {
      const now = this.clock.now().toISOString();
      const received = await this.attachments.lockUpload(em, {
        sha256,
        total,
        mimeType: fields.mimeType,
        at: now,
      });
      if (start !== received) {
        throw new ConflictException({
          message: `content-range: the server holds ${received} of ${total} bytes; resume from byte ${received}`,
          offset: received,
        });
      }
      await this.store.put(partKey(sha256, start), body, 'application/octet-stream');
      const offset = start + body.length;
      await this.attachments.partReceived(em, sha256, offset, now);
      if (offset < total) return { sha256, offset, total, complete: false, created: false };
      const mismatch = await this.assemble(em, sha256, fields.mimeType, total);
      return mismatch ?? { sha256, offset: total, total, complete: true, created: true };
    });
    // The reset after a hash mismatch is committed, so the next attempt starts from byte 0.
    if ('mismatch' in outcome)
      throw new UnprocessableEntityException({ message: outcome.mismatch, offset: 0 });
    if (outcome.complete) await this.markUploaded(user, record);
    return outcome;
  }

  /** Joins the parts, checks the hash, stores the file under its content key. */
  private async assemble(
    em: EntityManager,
    sha256: string,
    mimeType: string,
    total: number,
  ): Promise<{ mismatch: string } | null> {
    const keys = await this.store.list(`uploads/${sha256}/`);
    const parts: Uint8Array[] = [];
    for (const key of keys) {
      const part = await this.store.get(key);
      if (part) parts.push(part);
    }
    const whole = Buffer.concat(parts);
    const digest = createHash('sha256').update(whole).digest('hex');
    const reset = async () => {
      await this.store.remove(keys);
      await this.attachments.removeUpload(em, sha256);
    };
    if (whole.length !== total || digest !== sha256) {
      await reset();
      return {
        mismatch: `file: the ${whole.length} bytes received hash to ${digest}, not ${sha256}; upload the file again from the start`,
      };
    }
    await this.store.put(attachmentStorageKey(sha256), whole, mimeType);
    await this.attachments.insertBlob(em, {
      sha256,
      byteSize: total,
      mimeType,
      storageKey: attachmentStorageKey(sha256),
      at: this.clock.now().toISOString(),
    });
    await reset();
    return null;
  }

  /** Writes uploadedAt on the record once, so every tablet sees the file is on the server. */
  private async markUploaded(user: AuthUser, record: StoredRecord): Promise<void> {
    if ((record.fields as { uploadedAt?: string | null }).uploadedAt) return;
    await this.records.writeAsServer(
      'attachment',
      record.id,
      { uploadedAt: this.clock.now().toISOString() },
      {
        actorId: user.userId,
        kind: 'attachment.uploaded',
        detail: { sha256: (record.fields as { sha256: string }).sha256 },
      },
    );
  }

  async download(
    user: AuthUser,
    attachmentId: string,
  ): Promise<{ stream: Readable; mimeType: string; byteSize: number; sha256: string }> {
    if (!UUID.test(attachmentId))
      throw new BadRequestException('id: must be the attachment record id (a UUID)');
    const record = await this.records.get('attachment', attachmentId);
    if (!record) throw new NotFoundException(`attachment ${attachmentId} was not found`);
    assertSiteAccess(user, record.siteId);
    const fields = record.fields as RecordFields<'attachment'>;
    const blob = await this.storedBlob(fields.sha256);
    const stream = blob ? await this.store.stream(attachmentStorageKey(fields.sha256)) : null;
    if (!blob || !stream) {
      throw new ConflictException(
        `attachment ${attachmentId} has not been uploaded from its tablet yet; try again after it syncs`,
      );
    }
    await this.em.fork().transactional((em) =>
      this.audit.record(em, {
        kind: 'attachment.read',
        actorId: user.userId,
        deviceId: user.deviceId,
        siteId: record.siteId,
        subjectType: 'attachment',
        subjectId: attachmentId,
      }),
    );
    return {
      stream,
      mimeType: blob.mime_type,
      byteSize: Number(blob.byte_size),
      sha256: fields.sha256,
    };
  }
}
