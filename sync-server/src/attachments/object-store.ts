// Attachment bytes in object storage through the S3 API (@aws-sdk/client-s3). Development and tests
// point it at a local S3 fake; production at the clinic's bucket. Checksums are only sent when the
// API requires them: several S3-compatible stores refuse the SDK's default trailing checksums.
import {
  CreateBucketCommand,
  DeleteObjectsCommand,
  GetObjectCommand,
  HeadBucketCommand,
  HeadObjectCommand,
  ListObjectsV2Command,
  PutObjectCommand,
  S3Client,
} from '@aws-sdk/client-s3';
import type { Readable } from 'node:stream';
import type { AppConfig } from '../config/app-config';

export const OBJECT_STORE = Symbol('OBJECT_STORE');

export interface ObjectStore {
  put(key: string, body: Uint8Array, contentType: string): Promise<void>;
  get(key: string): Promise<Uint8Array | null>;
  stream(key: string): Promise<Readable | null>;
  exists(key: string): Promise<boolean>;
  list(prefix: string): Promise<string[]>;
  remove(keys: readonly string[]): Promise<void>;
}

function isNotFound(error: unknown): boolean {
  const e = error as { name?: string; $metadata?: { httpStatusCode?: number } } | null;
  return e?.name === 'NoSuchKey' || e?.name === 'NotFound' || e?.$metadata?.httpStatusCode === 404;
}

export function s3ObjectStore(config: AppConfig): ObjectStore {
  const client = new S3Client({
    region: config.s3.region,
    ...(config.s3.endpoint ? { endpoint: config.s3.endpoint } : {}),
    forcePathStyle: config.s3.forcePathStyle,
    credentials: { accessKeyId: config.s3.accessKeyId, secretAccessKey: config.s3.secretAccessKey },
    requestChecksumCalculation: 'WHEN_REQUIRED',
    responseChecksumValidation: 'WHEN_REQUIRED',
  });
  const Bucket = config.s3.bucket;
  let bucketChecked: Promise<void> | null = null;
  // Outside production a missing bucket is created (the local fake starts empty).
  const ready = () =>
    (bucketChecked ??= (async () => {
      if (config.env === 'production') return;
      try {
        await client.send(new HeadBucketCommand({ Bucket }));
      } catch (error) {
        if (!isNotFound(error)) throw error;
        await client.send(new CreateBucketCommand({ Bucket }));
      }
    })().catch((error: unknown) => {
      bucketChecked = null;
      throw error;
    }));

  return {
    async put(key, body, contentType) {
      await ready();
      await client.send(
        new PutObjectCommand({
          Bucket,
          Key: key,
          Body: body,
          ContentType: contentType,
          ContentLength: body.byteLength,
        }),
      );
    },
    async get(key) {
      await ready();
      try {
        const out = await client.send(new GetObjectCommand({ Bucket, Key: key }));
        return out.Body ? await out.Body.transformToByteArray() : new Uint8Array();
      } catch (error) {
        if (isNotFound(error)) return null;
        throw error;
      }
    },
    async stream(key) {
      await ready();
      try {
        const out = await client.send(new GetObjectCommand({ Bucket, Key: key }));
        return (out.Body as Readable | undefined) ?? null;
      } catch (error) {
        if (isNotFound(error)) return null;
        throw error;
      }
    },
    async exists(key) {
      await ready();
      try {
        await client.send(new HeadObjectCommand({ Bucket, Key: key }));
        return true;
      } catch (error) {
        if (isNotFound(error)) return false;
        throw error;
      }
    },
    async list(prefix) {
      await ready();
      const keys: string[] = [];
      let token: string | undefined;
      do {
        const out = await client.send(
          new ListObjectsV2Command({ Bucket, Prefix: prefix, ContinuationToken: token }),
        );
        for (const item of out.Contents ?? []) if (item.Key) keys.push(item.Key);
        token = out.IsTruncated ? out.NextContinuationToken : undefined;
      } while (token);
      return keys.sort();
    },
    async remove(keys) {
      if (keys.length === 0) return;
      await ready();
      await client.send(
        new DeleteObjectsCommand({ Bucket, Delete: { Objects: keys.map((Key) => ({ Key })) } }),
      );
    },
  };
}
