// A real SyncAuth for simulated tablets: it signs each author in through POST /api/auth/login
// with the tablet's device secret, caches the access token, and signs in again after a 401.
// A revoked tablet cannot sign in, so tokenFor answers null and the edits wait.
import type { SyncAuth } from '@pwa/sync/sync-auth';
import type { TestDevice, TestUser } from '@server/testing/identity-factory';

export class ServerSyncAuth implements SyncAuth {
  private readonly tokens = new Map<string, string>();
  readonly unauthorized: string[] = [];
  /** Authors that are signed out on this tablet (tokenFor answers null for them). */
  readonly signedOut = new Set<string>();

  constructor(
    private readonly baseUrl: string,
    private readonly device: TestDevice,
    private readonly people: Map<string, TestUser>,
  ) {}

  addPerson(person: TestUser): void {
    this.people.set(person.id, person);
  }

  async tokenFor(authorId: string): Promise<string | null> {
    if (this.signedOut.has(authorId)) return null;
    const cached = this.tokens.get(authorId);
    if (cached) return cached;
    const person = this.people.get(authorId);
    if (!person) return null;
    const response = await globalThis.fetch(`${this.baseUrl}/api/auth/login`, {
      method: 'POST',
      headers: { 'Content-Type': 'application/json' },
      body: JSON.stringify({
        email: person.email,
        password: person.password,
        deviceSecret: this.device.deviceSecret,
      }),
    });
    if (response.status !== 200) return null;
    const body = (await response.json()) as { accessToken: string };
    this.tokens.set(authorId, body.accessToken);
    return body.accessToken;
  }

  async onUnauthorized(authorId: string): Promise<void> {
    this.unauthorized.push(authorId);
    this.tokens.delete(authorId);
  }

  /** Makes the cached token stale, as an expired one would be. */
  spoilToken(authorId: string, token = 'expired.token.value'): void {
    this.tokens.set(authorId, token);
  }
}
