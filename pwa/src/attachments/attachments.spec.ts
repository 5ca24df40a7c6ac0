import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { FuselightDb } from '../data/db';
import { RecordsRepository, type EditContext } from '../data/records-repository';
import { AttachmentDb } from './attachment-db';
import { AttachmentInputError, attachFile, checkFile, sha256Hex } from './attachment-intake';
import { attachmentBlob, uploadWaitingFiles } from './attachment-transfer';

const SITE = '0190c6a0-0000-7000-8000-00000000a001';
const CLINICIAN = '0190c6a0-0000-7000-8000-00000000d001';
let db: FuselightDb;
let files: AttachmentDb;
let records: RecordsRepository;
let now = Date.parse('2026-12-01T10:00:00.000Z');
const ctx = (): EditContext => ({
  authorId: CLINICIAN,
  deviceId: 'tablet-1',
  nowMs: (now += 1000),
});

function png(size: number): Uint8Array<ArrayBuffer> {
  const bytes = new Uint8Array(size);
  bytes.set([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
  for (let i = 8; i < size; i += 1) bytes[i] = (i * 31) % 251;
  return bytes;
}

function sameBytes(a: ArrayBuffer | Uint8Array, b: Uint8Array): boolean {
  const x = new Uint8Array(a);
  return x.length === b.length && x.every((value, i) => value === b[i]);
}

beforeEach(() => {
  db = new FuselightDb(`att-${crypto.randomUUID()}`);
  files = new AttachmentDb(`att-files-${crypto.randomUUID()}`);
  records = new RecordsRepository(db);
});
afterEach(async () => {
  db.close();
  files.close();
  await db.delete();
  await files.delete();
});

async function aVisit() {
  const patientId = await records.create(
    'patient',
    {
      siteId: SITE,
      givenName: 'Tamsin',
      familyName: 'Orrery',
      dateOfBirth: '2016-03-09',
      clinicNumber: 'HB-20417',
    },
    ctx(),
  );
  const visitId = await records.create(
    'visit',
    { siteId: SITE, patientId, date: '2026-12-01', clinicianId: CLINICIAN, status: 'draft' },
    ctx(),
  );
  return (await records.get('visit', visitId))!;
}

/** A stand-in for the server's upload protocol that can drop the connection on a chosen part. */
function fakeServer(total: number) {
  const received: Uint8Array[] = [];
  let offset = 0;
  let dropNextPut = false;
  let puts = 0;
  const fetchFn = async (input: RequestInfo | URL, init?: RequestInit): Promise<Response> => {
    const method = init?.method ?? 'GET';
    if (method === 'HEAD') {
      return new Response(null, {
        status: 200,
        headers: {
          'upload-offset': String(offset),
          'upload-complete': offset === total ? '?1' : '?0',
        },
      });
    }
    if (method === 'PUT') {
      puts += 1;
      if (dropNextPut) {
        dropNextPut = false;
        throw new TypeError('Failed to fetch');
      }
      const range = /bytes (\d+)-(\d+)\/(\d+)/.exec(
        new Headers(init?.headers).get('content-range') ?? '',
      )!;
      if (Number(range[1]) !== offset)
        return Response.json({ offset, message: 'resume' }, { status: 409 });
      const body = new Uint8Array(init!.body as Uint8Array);
      received.push(body);
      offset += body.length;
      return Response.json(
        { offset, total, complete: offset === total },
        { status: offset === total ? 201 : 200 },
      );
    }
    void input;
    return new Response(new Uint8Array(received.flatMap((r) => [...r])), { status: 200 });
  };
  return {
    fetchFn,
    received,
    dropNext: () => (dropNextPut = true),
    get puts() {
      return puts;
    },
  };
}

describe('attachments on the tablet', () => {
  it('checks a file by its bytes, not its name, and refuses other content naming the field', async () => {
    const gif = new File([new TextEncoder().encode('GIF89a.......')], 'photo.png', {
      type: 'image/png',
    });
    const error = await checkFile(gif).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(AttachmentInputError);
    expect((error as AttachmentInputError).message).toBe(
      'file: the content is a GIF image, not a photo (JPEG, PNG, WebP or HEIC) or a PDF; only those can be attached',
    );
    const pdf = new File([new TextEncoder().encode('%PDF-1.7\n...')], 'scan.bin');
    expect((await checkFile(pdf)).mimeType).toBe('application/pdf');
    await expect(checkFile(new Blob([png(3000)]), 2000)).rejects.toThrow(
      /^file: 0.0 MB is larger than/,
    );
  });

  it('keeps the file on the tablet and writes the attachment record with the content hash', async () => {
    const visit = await aVisit();
    const bytes = png(5000);
    const id = await attachFile(
      records,
      files,
      { file: new Blob([bytes]), caption: ' Cover test ', visit },
      ctx(),
    );
    const record = (await records.get('attachment', id))!;
    expect(record.fields).toMatchObject({
      caption: 'Cover test',
      mimeType: 'image/png',
      byteSize: 5000,
      sha256: await sha256Hex(bytes),
      visitId: visit.id,
    });
    const stored = (await files.files.get(id))!;
    expect((await files.transfers.get(id))!.state).toBe('waiting');
    expect(sameBytes(stored.bytes, bytes)).toBe(true);
  });

  it('resumes an upload after a lost connection and keeps the file until the server has all of it', async () => {
    const visit = await aVisit();
    const bytes = png(2500);
    const id = await attachFile(
      records,
      files,
      { file: new Blob([bytes]), caption: '', visit },
      ctx(),
    );
    const server = fakeServer(bytes.length);
    const options = {
      baseUrl: '',
      tokenFor: async () => 'token',
      fetch: server.fetchFn,
      partBytes: 1000,
      now: () => now,
    };

    // First round: part one arrives, then the connection drops on part two.
    let sent = 0;
    const dropping = async (input: RequestInfo | URL, init?: RequestInit) => {
      if (init?.method === 'PUT' && ++sent === 2) server.dropNext();
      return server.fetchFn(input, init);
    };
    const [first] = await uploadWaitingFiles(files, { ...options, fetch: dropping });
    expect(first).toMatchObject({ attachmentId: id, status: 'waiting' });
    expect((await files.transfers.get(id))!.state).toBe('waiting');
    expect(server.received).toHaveLength(1);

    // Not due until the back-off has passed.
    expect(await uploadWaitingFiles(files, options)).toEqual([]);
    now += 60_000;
    const [second] = await uploadWaitingFiles(files, options);
    expect(second).toEqual({ attachmentId: id, status: 'uploaded' });
    expect((await files.transfers.get(id))!.state).toBe('uploaded');
    // The bytes stay on the tablet (a local copy for the viewer).
    expect(await files.files.get(id)).toBeDefined();
    // Part one was not sent again: three parts reached the server in all.
    expect(server.received.map((r) => r.length)).toEqual([1000, 1000, 500]);
    expect(sameBytes(new Uint8Array(server.received.flatMap((r) => [...r])), bytes)).toBe(true);
  });

  it('fetches another tablet’s attachment on demand and caches it', async () => {
    const bytes = png(1200);
    const server = fakeServer(bytes.length);
    server.received.push(bytes);
    let gets = 0;
    const counting = async (input: RequestInfo | URL, init?: RequestInit) => {
      if ((init?.method ?? 'GET') === 'GET') gets += 1;
      return server.fetchFn(input, init);
    };
    const attachment = {
      id: '0190c6a0-0000-7000-8000-0000000f0001',
      fields: { sha256: 'x'.repeat(64), mimeType: 'image/png', byteSize: 1200 },
    };
    const options = {
      baseUrl: '',
      tokenFor: async () => 'token',
      fetch: counting,
      authorId: CLINICIAN,
    };
    await attachmentBlob(files, attachment, options);
    expect(sameBytes((await files.files.get(attachment.id))!.bytes, bytes)).toBe(true);
    await attachmentBlob(files, attachment, options);
    expect(gets).toBe(1);
    expect((await files.transfers.get(attachment.id))!.state).toBe('cached');
  });
});
