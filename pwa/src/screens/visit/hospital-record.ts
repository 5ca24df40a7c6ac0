// The visit's hand-off to the hospital record as the tablet shows it (docs/fhir.md): the state the
// server wrote to the visit record, in words, and the visit's FHIR Bundle fetched through the
// tablet's one API client for "Download FHIR".
import type { VisitFields } from '@fuselight/shared';
import { ApiClient, type FetchLike } from '../../net/api-client';

export type HospitalRecordFields = Pick<
  VisitFields,
  'hospitalRecordState' | 'hospitalRecordAt' | 'hospitalRecordNote'
>;

function timeAt(iso: string, timeZone: string): string {
  const at = new Date(iso);
  if (Number.isNaN(at.getTime())) return 'an unknown time';
  const time = new Intl.DateTimeFormat('en-GB', {
    timeZone,
    hour: '2-digit',
    minute: '2-digit',
    hourCycle: 'h23',
  }).format(at);
  const day = new Intl.DateTimeFormat('en-GB', {
    timeZone,
    day: 'numeric',
    month: 'short',
    year: 'numeric',
  }).format(at);
  return `${time} on ${day}`;
}

/** What the visit's hand-off state says, or null when nothing was handed off (or none is set up). */
export function hospitalRecordWords(fields: HospitalRecordFields, timeZone: string): string | null {
  switch (fields.hospitalRecordState) {
    case 'sent':
      return `Sent to the hospital record at ${timeAt(fields.hospitalRecordAt ?? '', timeZone)}.`;
    case 'waiting':
      return `Waiting to send to the hospital record${
        fields.hospitalRecordNote ? ` (${fields.hospitalRecordNote})` : ''
      }.`;
    case 'refused':
      return `Refused by the hospital record: ${fields.hospitalRecordNote ?? 'no reason given'}. The clinic's administrator can look into it; nothing on this visit was lost.`;
    case null:
    case undefined:
      return null;
  }
}

/** The visit's FHIR R4 Bundle as the clinic server exports it (JSON text). */
export async function fetchVisitFhir(options: {
  fetch: FetchLike;
  token: string | null;
  visitId: string;
}): Promise<string> {
  const response = await new ApiClient({ fetch: options.fetch }).send(
    'GET',
    `/api/visits/${encodeURIComponent(options.visitId)}/fhir`,
    { token: options.token },
  );
  return response.text();
}
