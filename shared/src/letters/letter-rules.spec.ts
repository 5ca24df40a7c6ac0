import { describe, expect, it } from 'vitest';
import { chooseRecipients, letterChangeProblems } from './letter-rules';
import { attachmentContentProblem, sniffAttachmentType } from './attachment-content';

const finalLetter = {
  kind: 'referrer' as const,
  status: 'final' as const,
  finalisedAt: '2026-12-01T15:20:00.000Z',
  finalisedBy: '01935a00-0000-7000-8000-000000000103',
};

describe('letterChangeProblems', () => {
  it('lets a draft be edited freely', () => {
    expect(
      letterChangeProblems(
        { kind: 'referrer', status: 'draft' },
        { opening: 'Dear Dr W', planText: 'Review' },
      ),
    ).toEqual([]);
  });

  it('refuses any edit to a final letter, naming the field', () => {
    expect(letterChangeProblems(finalLetter, { opening: 'changed' })).toEqual([
      {
        field: 'opening',
        message:
          'opening: this letter is final and can no longer be changed; write a new letter instead',
      },
    ]);
    expect(letterChangeProblems(finalLetter, { status: 'draft' })[0]?.field).toBe('status');
  });

  it('accepts a send request on a final letter, or with the change that finalises it', () => {
    expect(letterChangeProblems(finalLetter, { deliveryState: 'queued' })).toEqual([]);
    expect(
      letterChangeProblems(
        { kind: 'referrer', status: 'draft' },
        { ...finalLetter, deliveryState: 'queued' },
      ),
    ).toEqual([]);
  });

  it('accepts a timed send request with the patient copy choice on a final letter', () => {
    expect(
      letterChangeProblems(finalLetter, {
        sendRequestedAt: '2026-12-01T16:00:00.000Z',
        copyToPatient: true,
      }),
    ).toEqual([]);
    expect(letterChangeProblems(finalLetter, { copyToPatient: true })[0]?.field).toBe(
      'copyToPatient',
    );
    expect(
      letterChangeProblems({ status: 'draft' }, { sendRequestedAt: '2026-12-01T16:00:00.000Z' })[0]
        ?.field,
    ).toBe('sendRequestedAt');
  });

  it('refuses a send request on a draft and delivery results from a tablet', () => {
    expect(
      letterChangeProblems({ status: 'draft' }, { deliveryState: 'queued' })[0]?.message,
    ).toMatch(/only once it is final/);
    expect(letterChangeProblems(finalLetter, { deliveryState: 'sent' })[0]?.field).toBe(
      'deliveryState',
    );
    expect(
      letterChangeProblems(finalLetter, { sentAt: '2026-12-01T16:00:00.000Z' })[0]?.field,
    ).toBe('sentAt');
  });

  it('requires who finalised and when', () => {
    expect(
      letterChangeProblems({ status: 'draft' }, { status: 'final' }).map((p) => p.field),
    ).toEqual(['finalisedAt', 'finalisedBy']);
  });
});

describe('chooseRecipients', () => {
  const patient = {
    referrer: { name: 'Dr Anselm Whitcombe', email: 'A.Whitcombe@practice.example' },
  };

  it('sends a referrer letter to the referrer address on file', () => {
    expect(chooseRecipients(finalLetter, patient)).toEqual({
      recipients: [
        { address: 'a.whitcombe@practice.example', role: 'referrer', name: 'Dr Anselm Whitcombe' },
      ],
      problems: [],
    });
  });

  it('refuses an address that is not on the record', () => {
    const choice = chooseRecipients(
      { ...finalLetter, recipientEmail: 'someone@elsewhere.example' },
      patient,
    );
    expect(choice.recipients).toEqual([]);
    expect(choice.problems[0]?.field).toBe('recipientEmail');
  });

  it('adds a patient copy only when the patient has an address on file', () => {
    expect(
      chooseRecipients({ ...finalLetter, copyToPatient: true }, patient).problems[0]?.field,
    ).toBe('patient.email');
    const withPatient = chooseRecipients(
      { ...finalLetter, copyToPatient: true },
      { ...patient, email: 'family@home.example' },
    );
    expect(withPatient.recipients.map((r) => r.role)).toEqual(['referrer', 'patient']);
  });

  it('sends nothing for a draft or when the referrer has no address', () => {
    expect(chooseRecipients({ ...finalLetter, status: 'draft' }, patient).recipients).toEqual([]);
    expect(chooseRecipients(finalLetter, { referrer: { name: 'Dr W' } }).problems[0]?.field).toBe(
      'patient.referrer.email',
    );
  });
});

describe('attachment content by magic bytes', () => {
  const bytes = (...values: number[]) => new Uint8Array(values);
  const text = (s: string) => new TextEncoder().encode(s);

  it('recognises JPEG, PNG, PDF, WebP and HEIC from their opening bytes', () => {
    expect(sniffAttachmentType(bytes(0xff, 0xd8, 0xff, 0xe0))).toBe('image/jpeg');
    expect(sniffAttachmentType(bytes(0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a))).toBe(
      'image/png',
    );
    expect(sniffAttachmentType(text('%PDF-1.7\n'))).toBe('application/pdf');
    expect(sniffAttachmentType(text('RIFF\0\0\0\0WEBPVP8 '))).toBe('image/webp');
    expect(sniffAttachmentType(text('\0\0\0\x18ftypheic\0\0\0\0'))).toBe('image/heic');
  });

  it('refuses other content with a message saying what it looks like, whatever the name', () => {
    expect(attachmentContentProblem(text('GIF89a....'))).toBe(
      'file: the content is a GIF image, not a photo (JPEG, PNG, WebP or HEIC) or a PDF; only those can be attached',
    );
    expect(attachmentContentProblem(text('<html>hello</html>'))).toMatch(/content is text/);
    expect(attachmentContentProblem(bytes(0x50, 0x4b, 0x03, 0x04))).toMatch(/ZIP archive/);
  });

  it('refuses content that is not what the record declares', () => {
    expect(attachmentContentProblem(text('%PDF-1.4'), 'image/jpeg')).toBe(
      'mimeType: the record says image/jpeg but the content is application/pdf',
    );
  });
});
