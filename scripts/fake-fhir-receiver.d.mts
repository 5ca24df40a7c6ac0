// Types of fake-fhir-receiver.mjs for the server's tests.
export interface ReceivedBundle {
  id: string;
  at: string;
  bundle: {
    resourceType: 'Bundle';
    type: string;
    entry?: { resource?: Record<string, unknown> }[];
  };
}

export interface FakeFhirReceiver {
  /** The base URL to give the server as FHIR_BASE_URL. */
  url: string;
  /** The page listing what it received. */
  page: string;
  received: ReceivedBundle[];
  failNext(count: number, status?: number): void;
  refuseWith(text: string | null): void;
  close(): Promise<void>;
}

export function validationErrors(resource: object): string[];

export function startFakeFhirReceiver(options?: {
  port?: number;
  host?: string;
}): Promise<FakeFhirReceiver>;
