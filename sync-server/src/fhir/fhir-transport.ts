// Sends a transaction Bundle to the configured FHIR server (FHIR_BASE_URL) with Node's fetch.
// Tests run it against the local fake receiver (scripts/fake-fhir-receiver.mjs).
import type { Bundle, OperationOutcome } from 'fhir/r4';

export const FHIR_TRANSPORT = Symbol('FHIR_TRANSPORT');

/** What the FHIR server answered. */
export type FhirSendResult =
  { ok: true; location: string | null } | { ok: false; retry: boolean; reason: string };

export interface FhirTransport {
  send(baseUrl: string, bundle: Bundle): Promise<FhirSendResult>;
}

const TIMEOUT_MS = 20_000;

/** The diagnostics of an OperationOutcome, or the start of whatever else the body said. */
export function describeRefusal(status: number, body: string): string {
  try {
    const parsed = JSON.parse(body) as Partial<OperationOutcome>;
    if (parsed.resourceType === 'OperationOutcome' && Array.isArray(parsed.issue)) {
      const words = parsed.issue
        .map((i) => i.diagnostics ?? i.details?.text ?? i.code)
        .filter(Boolean)
        .join('; ');
      return `the hospital record answered ${status}: ${words}`.slice(0, 1000);
    }
  } catch {
    // not JSON: say what it was below
  }
  return `the hospital record answered ${status}${body ? `: ${body.slice(0, 300)}` : ''}`;
}

export const fetchFhirTransport: FhirTransport = {
  async send(baseUrl, bundle) {
    let response: Response;
    try {
      response = await fetch(baseUrl, {
        method: 'POST',
        headers: {
          'content-type': 'application/fhir+json',
          accept: 'application/fhir+json',
        },
        body: JSON.stringify(bundle),
        signal: AbortSignal.timeout(TIMEOUT_MS),
      });
    } catch (error) {
      const cause = (error as { cause?: { code?: string } }).cause?.code;
      return {
        ok: false,
        retry: true,
        reason: `the hospital record could not be reached (${cause ?? (error instanceof Error ? error.name : 'error')})`,
      };
    }
    const body = await response.text();
    if (response.ok) {
      return { ok: true, location: response.headers.get('location') };
    }
    // 4xx is a refusal of this content (except a timeout or rate limit); 5xx is retried.
    const retry = response.status >= 500 || response.status === 408 || response.status === 429;
    return { ok: false, retry, reason: describeRefusal(response.status, body) };
  },
};
