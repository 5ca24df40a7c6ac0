// Metadata of a file attached to a visit (a photo, a scanned form). The bytes live in object
// storage under `storageKey`; the sha256 lets both ends check what they hold.
import { z } from 'zod';
import { id, instant, measurement, text, withMeta } from './field-types.schema';

export const MAX_ATTACHMENT_BYTES = 25 * 1024 * 1024;

export const attachmentSchema = z.object({
  siteId: id('Site'),
  visitId: id('Visit'),
  patientId: id('Patient'),
  caption: text('Caption', { max: 500 }).nullish(),
  mimeType: withMeta(
    z
      .string({ error: 'File type must be text' })
      .max(127, { error: 'File type must be at most 127 characters' })
      .regex(/^[a-z]+\/[a-z0-9.+-]+$/, {
        error: 'File type must be a media type like image/jpeg',
      }),
    { label: 'File type', unit: null, kind: 'text' },
  ),
  byteSize: measurement({
    label: 'File size',
    unit: 'bytes',
    min: 1,
    max: MAX_ATTACHMENT_BYTES,
    integer: true,
  }),
  sha256: withMeta(
    z
      .string({ error: 'SHA-256 must be text' })
      .regex(/^[0-9a-f]{64}$/, { error: 'SHA-256 must be 64 lowercase hexadecimal characters' }),
    { label: 'SHA-256', unit: null, kind: 'text' },
  ),
  storageKey: text('Storage key', { max: 500, min: 1 }),
  uploadedAt: instant('Uploaded at').nullish(),
});
