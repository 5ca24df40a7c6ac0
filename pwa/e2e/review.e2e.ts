// Two tablets disagree about an amblyoscope angle while offline, both sync, and a supervisor
// resolves the dispute on the Review desk in Chromium; both tablets then pull the chosen value.
// People, the site and the tablets are made here in the empty migrated database (never the demo
// seed). The tablets are real enrolled devices with device-bound sessions talking sync protocol 1
// to the real server from this process; only the supervisor's desk runs in the browser.
import { randomUUID } from 'node:crypto';
import type { BrowserContext } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { baseUrl, launchTablet, screenshot } from './support/browser';
import {
  type Person,
  type Role,
  newPerson,
  newSite,
  runTag,
  seedClinic,
} from './support/clinic-fixtures';
import { openAndSignIn } from './support/tablet-flows';

const run = runTag();
const site = newSite(`Harbour Street Clinic ${run}`);
const siteId = site.id;
const person = (name: string, role: Role) =>
  newPerson(name, role, {
    email: `${name.split(' ')[0]!.toLowerCase()}.${run}@harbour.test`,
    password: `${role}-pass-${run}`,
  });
const admin = person('Ines Marlowe', 'admin');
const supervisor = person('Corin Hale', 'supervisor');
const ada = person('Ada Quill', 'orthoptist');
const bram = person('Bram Osei', 'orthoptist');

async function api<T>(method: string, path: string, body?: unknown, token?: string): Promise<T> {
  const res = await fetch(`${baseUrl()}${path}`, {
    method,
    headers: {
      'content-type': 'application/json',
      ...(token ? { authorization: `Bearer ${token}` } : {}),
    },
    ...(body === undefined ? {} : { body: JSON.stringify(body) }),
  });
  const text = await res.text();
  if (!res.ok) throw new Error(`${method} ${path} answered ${res.status}: ${text}`);
  return (text ? JSON.parse(text) : null) as T;
}

/** An enrolled tablet with a clinician signed in on it, and its own hybrid logical clock. */
class SyncedTablet {
  private counter = 0;
  constructor(
    readonly deviceId: string,
    readonly token: string,
  ) {}

  static async enrol(adminToken: string, label: string, clinician: Person): Promise<SyncedTablet> {
    const ticket = await api<{ deviceId: string; enrolmentCode: string }>(
      'POST',
      '/api/admin/devices',
      { label, siteIds: [siteId] },
      adminToken,
    );
    const enrolled = await api<{ deviceId: string; deviceSecret: string }>(
      'POST',
      '/api/devices/enrol',
      {
        code: ticket.enrolmentCode,
      },
    );
    const session = await api<{ accessToken: string }>('POST', '/api/auth/login', {
      email: clinician.email,
      password: clinician.password,
      deviceSecret: enrolled.deviceSecret,
    });
    return new SyncedTablet(enrolled.deviceId, session.accessToken);
  }

  stamp(): string {
    this.counter += 1;
    return `${String(Date.now()).padStart(15, '0')}-${String(this.counter).padStart(5, '0')}-${this.deviceId}`;
  }

  /** Edits made while offline are queued here and pushed together when the network returns. */
  readonly outbox: Record<string, unknown>[] = [];

  edit(
    collection: string,
    recordId: string,
    fields: Record<string, unknown>,
    baseVersion: number,
  ): void {
    this.outbox.push({
      changeId: randomUUID(),
      collection,
      recordId,
      baseVersion,
      hlc: this.stamp(),
      fields,
    });
  }

  async sync(): Promise<{ status: string; version?: number }[]> {
    const changes = this.outbox.splice(0);
    const answer = await api<{ results: { status: string; version?: number }[] }>(
      'POST',
      '/api/sync/push',
      { protocol: 1, schemaVersion: 1, changes },
      this.token,
    );
    return answer.results;
  }

  async pull(
    recordId: string,
  ): Promise<{ version: number; fields: Record<string, unknown>; conflicts: string[] }> {
    let after = 0;
    let found:
      | { id: string; version: number; fields: Record<string, unknown>; conflicts: string[] }
      | undefined;
    for (;;) {
      const page = await api<{
        records: {
          id: string;
          version: number;
          fields: Record<string, unknown>;
          conflicts: string[];
        }[];
        cursor: number;
        more: boolean;
      }>('GET', `/api/sync/pull?after=${after}`, undefined, this.token);
      found = page.records.find((r) => r.id === recordId) ?? found;
      after = page.cursor;
      if (!page.more) break;
    }
    if (!found) throw new Error(`record ${recordId} did not reach tablet ${this.deviceId}`);
    return found;
  }
}

describe('the Review desk resolves a dispute between two tablets', () => {
  let desk: BrowserContext;
  let one: SyncedTablet;
  let two: SyncedTablet;
  const patientId = randomUUID();
  const visitId = randomUUID();
  const anglesId = randomUUID();

  beforeAll(async () => {
    await seedClinic(site, [admin, supervisor, ada, bram]);
    const adminSession = await api<{ accessToken: string }>('POST', '/api/auth/login', {
      email: admin.email,
      password: admin.password,
    });
    one = await SyncedTablet.enrol(adminSession.accessToken, `Room 2 tablet ${run}`, ada);
    two = await SyncedTablet.enrol(adminSession.accessToken, `Room 3 tablet ${run}`, bram);
    desk = await launchTablet();
  });
  afterAll(async () => {
    await desk?.close();
  });

  it('two tablets disagree offline, sync, the supervisor chooses on the desk and both converge', async () => {
    one.edit(
      'patient',
      patientId,
      {
        siteId,
        givenName: 'Mira',
        familyName: 'Tenby',
        dateOfBirth: '2017-03-14',
        clinicNumber: `HS-${run}`,
        sex: 'female',
      },
      0,
    );
    one.edit(
      'visit',
      visitId,
      { siteId, patientId, date: '2026-12-01', clinicianId: ada.id, status: 'draft' },
      0,
    );
    one.edit(
      'amblyoscopeAngles',
      anglesId,
      { siteId, visitId, patientId, objectiveHorizontalDeg: 12, subjectiveHorizontalDeg: 4 },
      0,
    );
    expect((await one.sync()).map((r) => r.status)).toEqual(['applied', 'applied', 'applied']);
    const base = (await two.pull(anglesId)).version;

    // Both offline: each re-measures the objective angle from the same version.
    one.edit('amblyoscopeAngles', anglesId, { objectiveHorizontalDeg: 14 }, base);
    two.edit('amblyoscopeAngles', anglesId, { objectiveHorizontalDeg: -8 }, base);
    expect((await one.sync()).map((r) => r.status)).toEqual(['applied']);
    expect((await two.sync()).map((r) => r.status)).toEqual(['conflict']);

    const page = await desk.newPage();
    await openAndSignIn(page, supervisor);
    await page.locator('ion-tab-button[tab="review"]').click();
    await page.getByRole('button', { name: 'Disputes (1)' }).waitFor({ timeout: 15_000 });
    const row = page.getByRole('row', { name: /Mira Tenby/ });
    await row.getByText('eso 14.0° (24.9Δ) / exo 8.0° (14.1Δ)').waitFor();
    await screenshot(page, 'review-desk-disputes');

    await row
      .getByRole('button', { name: /Open the dispute on Objective horizontal angle/ })
      .click();
    const values = page.getByRole('group', { name: 'Values entered' });
    await values.getByText(/Entered by Bram Osei on Room 3 tablet/).waitFor();
    expect(await values.getByText('Provisional (held now)').count()).toBe(1);
    await page.getByText('Subjective horizontal angle').waitFor();
    await screenshot(page, 'review-desk-dispute');

    await page.getByRole('radio', { name: /eso 14\.0°/ }).check();
    await page.getByRole('button', { name: 'Resolve dispute' }).click();
    await page.getByText('A note saying why is required').waitFor();
    await page
      .getByLabel('Note: why this value (required)')
      .fill('Re-measured together at the bench');
    await page.getByRole('button', { name: 'Resolve dispute' }).click();
    await page
      .getByText('Dispute resolved; every tablet gets the value on its next sync.')
      .waitFor();
    await page.getByText('No open disputes in your sites. Every tablet’s edits agree.').waitFor();
    await screenshot(page, 'review-desk-resolved');

    for (const tablet of [one, two]) {
      const record = await tablet.pull(anglesId);
      expect(record.fields.objectiveHorizontalDeg).toBe(14);
      expect(record.conflicts).toEqual([]);
    }
    const [a, b] = await Promise.all([one.pull(anglesId), two.pull(anglesId)]);
    expect(a).toEqual(b);
  });
});
