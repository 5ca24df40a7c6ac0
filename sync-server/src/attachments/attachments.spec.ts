import { createHash, randomBytes } from 'node:crypto';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import request from 'supertest';
import { v7 as uuidv7 } from 'uuid';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { attachmentStorageKey } from '@fuselight/shared';
import { RecordAccess } from '../letters/record-access';
import {
  startFakeS3,
  tabletAt,
  type FakeS3,
  type LetterTablet,
} from '../letters/testing/letters-test-kit';
import { createSite } from '../testing/identity-factory';
import { createTestApp, type TestApp } from '../testing/test-app';

const BUCKET = 'fuselight-test-attachments';
const PNG_SIGNATURE = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);

function pngOf(size: number): Buffer {
  return Buffer.concat([PNG_SIGNATURE, randomBytes(size - PNG_SIGNATURE.length)]);
}
const sha = (bytes: Buffer) => createHash('sha256').update(bytes).digest('hex');

describe('attachments: resumable upload by content hash, download in scope', () => {
  let t: TestApp;
  let s3: FakeS3;
  let siteA: string;
  let siteB: string;
  let author: LetterTablet;
  let colleague: LetterTablet;
  let stranger: LetterTablet;
  let patientId: string;
  let visitId: string;
  let server: http.Server;

  beforeAll(async () => {
    s3 = await startFakeS3(BUCKET);
    t = await createTestApp({
      env: {
        S3_ENDPOINT: s3.endpoint,
        S3_BUCKET: BUCKET,
        ATTACHMENT_MAX_BYTES: String(1024 * 1024),
      },
    });
    server = t.app.getHttpServer() as http.Server;
    // Listening on a real port, so a test can cut a connection off halfway.
    await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', () => resolve()));
    siteA = (await createSite(t, { name: 'Harbourside Eye Clinic' })).id;
    siteB = (await createSite(t, { name: 'Elsewhere Clinic' })).id;
    author = await tabletAt(t, 'orthoptist', [siteA]);
    colleague = await tabletAt(t, 'orthoptist', [siteA]);
    stranger = await tabletAt(t, 'orthoptist', [siteB]);
    patientId = uuidv7();
    visitId = uuidv7();
    await author.pushAll([
      {
        collection: 'patient',
        recordId: patientId,
        fields: {
          siteId: siteA,
          givenName: 'Tamsin',
          familyName: 'Orrery',
          dateOfBirth: '2016-03-09',
          clinicNumber: 'HB-20417',
        },
      },
      {
        collection: 'visit',
        recordId: visitId,
        fields: {
          siteId: siteA,
          patientId,
          date: '2026-12-01',
          clinicianId: author.person.id,
          status: 'draft',
        },
      },
    ]);
  });
  afterAll(async () => {
    await t.close();
    await s3.close();
  });

  async function attachmentRecord(
    bytes: Buffer,
    mimeType = 'image/png',
    caption = 'Cover test photo',
  ): Promise<string> {
    const id = uuidv7();
    const hash = sha(bytes);
    await author.pushOk('attachment', id, {
      siteId: siteA,
      patientId,
      visitId,
      caption,
      mimeType,
      byteSize: bytes.length,
      sha256: hash,
      storageKey: attachmentStorageKey(hash),
    });
    return id;
  }

  const put = (tablet: LetterTablet, id: string, hash: string, body: Buffer, range?: string) => {
    const req = request(server)
      .put(`/api/attachments/${hash}`)
      .set('authorization', `Bearer ${tablet.token}`)
      .set('x-attachment-id', id)
      .set('content-type', 'application/octet-stream');
    if (range) req.set('content-range', range);
    return req.send(body);
  };
  const head = (tablet: LetterTablet, id: string, hash: string) =>
    request(server)
      .head(`/api/attachments/${hash}`)
      .set('authorization', `Bearer ${tablet.token}`)
      .set('x-attachment-id', id);
  const get = (tablet: LetterTablet, id: string) =>
    request(server)
      .get(`/api/attachments/${id}`)
      .set('authorization', `Bearer ${tablet.token}`)
      .buffer(true)
      .parse((res, done) => {
        const chunks: Buffer[] = [];
        res.on('data', (c: Buffer) => chunks.push(c));
        res.on('end', () => done(null, Buffer.concat(chunks)));
      });

  it('stores a whole upload, marks the record uploaded, and lets a colleague in the site download it', async () => {
    const bytes = pngOf(180_000);
    const id = await attachmentRecord(bytes);
    const res = await put(author, id, sha(bytes), bytes).expect(201);
    expect(res.body).toEqual({
      sha256: sha(bytes),
      offset: bytes.length,
      total: bytes.length,
      complete: true,
    });
    const fields = (await t.app.get(RecordAccess).get('attachment', id))!.fields;
    expect(fields.uploadedAt).toBe(t.clock.now().toISOString());

    const download = await get(colleague, id).expect(200);
    expect(download.headers['content-type']).toBe('image/png');
    expect(sha(download.body as Buffer)).toBe(sha(bytes));
  });

  it('refuses the download to a tablet outside the attachment site', async () => {
    const bytes = pngOf(20_000);
    const id = await attachmentRecord(bytes);
    await put(author, id, sha(bytes), bytes).expect(201);
    const res = await get(stranger, id).expect(403);
    expect(JSON.parse((res.body as Buffer).toString()).message).toMatch(
      /is not one of the sites this session may use/,
    );
    await put(stranger, id, sha(bytes), bytes).expect(403);
  });

  it('resumes an upload cut off by a lost connection from the last part the server holds', async () => {
    const bytes = pngOf(300_000);
    const hash = sha(bytes);
    const id = await attachmentRecord(bytes);
    await put(author, id, hash, bytes.subarray(0, 100_000), `bytes 0-99999/${bytes.length}`).expect(
      200,
    );

    // The second part is cut off halfway: the socket closes before the declared length arrives.
    await new Promise<void>((resolve) => {
      const { port } = server.address() as AddressInfo;
      const req = http.request({
        host: '127.0.0.1',
        port,
        method: 'PUT',
        path: `/api/attachments/${hash}`,
        headers: {
          authorization: `Bearer ${author.token}`,
          'x-attachment-id': id,
          'content-type': 'application/octet-stream',
          'content-range': `bytes 100000-199999/${bytes.length}`,
          'content-length': '100000',
        },
      });
      req.on('error', () => resolve());
      req.on('close', () => resolve());
      req.write(bytes.subarray(100_000, 150_000), () => setTimeout(() => req.destroy(), 50));
    });

    const state = await head(author, id, hash).expect(200);
    expect(state.headers['upload-offset']).toBe('100000');
    expect(state.headers['upload-complete']).toBe('?0');

    // A part that does not start where the server stands is refused with the offset to resume at.
    const wrong = await put(
      author,
      id,
      hash,
      bytes.subarray(0, 100_000),
      `bytes 0-99999/${bytes.length}`,
    ).expect(409);
    expect(wrong.body).toMatchObject({
      offset: 100_000,
      message: expect.stringMatching(/resume from byte 100000/),
    });

    await put(
      author,
      id,
      hash,
      bytes.subarray(100_000),
      `bytes 100000-299999/${bytes.length}`,
    ).expect(201);
    expect(sha((await get(colleague, id).expect(200)).body as Buffer)).toBe(hash);
  });

  it('answers a duplicate upload without storing the content again, for the same or another record', async () => {
    const bytes = pngOf(50_000);
    const hash = sha(bytes);
    const first = await attachmentRecord(bytes);
    await put(author, first, hash, bytes).expect(201);
    const again = await put(author, first, hash, bytes).expect(200);
    expect(again.body).toMatchObject({ complete: true, offset: bytes.length });

    const second = await attachmentRecord(bytes, 'image/png', 'Same photo on another visit');
    const state = await head(author, second, hash).expect(200);
    expect(state.headers['upload-complete']).toBe('?1');
    expect(
      (await t.app.get(RecordAccess).get('attachment', second))!.fields.uploadedAt,
    ).toBeTruthy();
    const blobs = await t
      .em()
      .getConnection()
      .execute(`select count(*)::int as n from attachment_blob where sha256 = '${hash}'`);
    expect(blobs[0]?.n).toBe(1);
  });

  it('refuses content that is not a photo or PDF, by its bytes, with a clear message', async () => {
    const gif = Buffer.concat([Buffer.from('GIF89a'), randomBytes(2000)]);
    const id = await attachmentRecord(gif, 'image/gif', 'renamed to photo.png');
    const res = await put(author, id, sha(gif), gif).expect(415);
    expect(res.body.message).toBe(
      'file: the content is a GIF image, not a photo (JPEG, PNG, WebP or HEIC) or a PDF; only those can be attached',
    );
    await get(colleague, id).expect(409);
  });

  it('refuses content that is not what the record declares', async () => {
    const png = pngOf(3000);
    const id = await attachmentRecord(png, 'image/jpeg');
    const res = await put(author, id, sha(png), png).expect(415);
    expect(res.body.message).toBe(
      'mimeType: the record says image/jpeg but the content is image/png',
    );
  });

  it('refuses a file larger than the configured limit, naming the sizes', async () => {
    const big = pngOf(1024 * 1024 + 10);
    const id = await attachmentRecord(big);
    const res = await put(
      author,
      id,
      sha(big),
      big.subarray(0, 1000),
      `bytes 0-999/${big.length}`,
    ).expect(413);
    expect(res.body.message).toMatch(
      /^file: 1\.0 MB is larger than the 1\.0 MB the server accepts/,
    );
  });

  it('asks the tablet to sync the record first when the record is not on the server', async () => {
    const bytes = pngOf(1000);
    const res = await put(author, uuidv7(), sha(bytes), bytes).expect(409);
    expect(res.body.message).toMatch(/sync the attachment record first/);
  });

  it('throws away an upload whose bytes do not hash to the declared content, and starts again from 0', async () => {
    const bytes = pngOf(10_000);
    const id = await attachmentRecord(bytes);
    const tampered = Buffer.from(bytes);
    tampered[5000] = tampered[5000]! ^ 0xff;
    const res = await put(author, id, sha(bytes), tampered).expect(422);
    expect(res.body).toMatchObject({
      offset: 0,
      message: expect.stringMatching(/upload the file again from the start/),
    });
    expect((await head(author, id, sha(bytes)).expect(200)).headers['upload-offset']).toBe('0');
    await put(author, id, sha(bytes), bytes).expect(201);
  });
});
