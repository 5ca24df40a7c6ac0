// Reads a raw upload body from the request stream with a byte limit. A body cut off by a lost
// connection rejects, so nothing of it is stored and the upload resumes from the last whole part.
import { PayloadTooLargeException, BadRequestException } from '@nestjs/common';
import type { Request } from 'express';

export function readUploadBody(
  req: Request,
  limit: number,
  describeLimit: string,
): Promise<Buffer> {
  return new Promise((resolve, reject) => {
    const chunks: Buffer[] = [];
    let size = 0;
    let settled = false;
    const fail = (error: Error) => {
      if (settled) return;
      settled = true;
      reject(error);
    };
    req.on('data', (chunk: Buffer) => {
      size += chunk.length;
      if (size > limit) {
        fail(new PayloadTooLargeException(describeLimit));
        req.resume();
        return;
      }
      chunks.push(chunk);
    });
    req.on('aborted', () =>
      fail(new BadRequestException('body: the upload was cut off before it ended; resume it')),
    );
    req.on('error', (error) => fail(error));
    req.on('end', () => {
      if (settled) return;
      settled = true;
      resolve(Buffer.concat(chunks));
    });
  });
}

export interface ContentRange {
  start: number;
  end: number;
  total: number;
}

/** `bytes 0-1048575/3145728` → {start, end, total}; null when the header is absent. */
export function parseContentRange(header: string | undefined): ContentRange | null {
  if (header === undefined || header === '') return null;
  const match = /^bytes (\d+)-(\d+)\/(\d+)$/.exec(header.trim());
  if (!match)
    throw new BadRequestException('content-range: must read "bytes <first>-<last>/<total>"');
  const [start, end, total] = [Number(match[1]), Number(match[2]), Number(match[3])];
  if (end < start || end >= total) {
    throw new BadRequestException(
      `content-range: bytes ${start}-${end} do not fit in a file of ${total} bytes`,
    );
  }
  return { start, end, total };
}
