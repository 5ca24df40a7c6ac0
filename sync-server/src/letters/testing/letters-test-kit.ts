// Test helpers for letters, mail and attachments: an in-process fake SMTP server (smtp-server) and
// S3 (s3rver) on ephemeral ports, and an invented patient with three visits and a letter pushed
// through the real sync route by a real, signed-in tablet.
import { mkdtempSync, rmSync } from 'node:fs';
import type { AddressInfo } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import S3rver from 's3rver';
import { SMTPServer } from 'smtp-server';
import request from 'supertest';
import { v7 as uuidv7 } from 'uuid';
import {
  PROTOCOL_VERSION,
  SCHEMA_VERSION,
  createClock,
  exampleLetterInput,
  exampleVisits,
  tick,
  type HlcClock,
  type JsonValue,
  type PushResponse,
} from '@fuselight/shared';
import {
  createDevice,
  createSite,
  createUser,
  signIn,
  type TestUser,
} from '../../testing/identity-factory';
import type { TestApp } from '../../testing/test-app';

export interface ReceivedMail {
  from: string;
  to: string[];
  raw: string;
}

export interface FakeSmtp {
  port: number;
  mails: ReceivedMail[];
  /** While set, every message is refused with this SMTP reply code (e.g. 451 or 550). */
  refuseWith: number | null;
  close(): Promise<void>;
}

export async function startFakeSmtp(): Promise<FakeSmtp> {
  const fake: FakeSmtp = { port: 0, mails: [], refuseWith: null, close: async () => undefined };
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS', 'AUTH'],
    logger: false,
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      stream.on('data', (chunk: Buffer) => chunks.push(chunk));
      stream.on('end', () => {
        if (fake.refuseWith) {
          const error = Object.assign(new Error('refused by the test relay'), {
            responseCode: fake.refuseWith,
          });
          callback(error);
          return;
        }
        fake.mails.push({
          from: session.envelope.mailFrom ? session.envelope.mailFrom.address : '',
          to: session.envelope.rcptTo.map((r) => r.address),
          raw: Buffer.concat(chunks).toString('latin1'),
        });
        callback();
      });
    },
  });
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', () => resolve()));
  fake.port = (server.server.address() as AddressInfo).port;
  fake.close = () => new Promise<void>((resolve) => server.close(() => resolve()));
  return fake;
}

/** The first application/pdf attachment of a raw MIME message, decoded. */
export function pdfAttachmentOf(raw: string): { filename: string; bytes: Buffer } | null {
  const part =
    /Content-Type: application\/pdf;[^]*?filename="?([^"\r\n;]+)"?[^]*?\r\n\r\n([A-Za-z0-9+/=\r\n]+)/i.exec(
      raw,
    );
  if (!part) return null;
  return { filename: part[1]!, bytes: Buffer.from(part[2]!.replace(/\r?\n/g, ''), 'base64') };
}

export interface FakeS3 {
  endpoint: string;
  close(): Promise<void>;
}

export async function startFakeS3(bucket: string): Promise<FakeS3> {
  const directory = mkdtempSync(join(tmpdir(), 'fuselight-s3-'));
  const server = new S3rver({
    port: 0,
    address: '127.0.0.1',
    silent: true,
    directory,
    configureBuckets: [{ name: bucket, configs: [] }],
  });
  const address = (await server.run()) as AddressInfo;
  return {
    endpoint: `http://127.0.0.1:${address.port}`,
    async close() {
      await server.close();
      rmSync(directory, { recursive: true, force: true });
    },
  };
}

/** A tablet signed in as a real person, pushing records through POST /api/sync/push. */
export class LetterTablet {
  private clock: HlcClock;

  constructor(
    private readonly t: TestApp,
    readonly person: TestUser,
    readonly deviceId: string,
    readonly token: string,
  ) {
    this.clock = createClock(deviceId);
  }

  async push(
    collection: string,
    recordId: string,
    fields: Record<string, JsonValue>,
    baseVersion = 0,
    extra: { deleted?: boolean } = {},
  ): Promise<PushResponse> {
    const next = tick(this.clock, this.t.clock.now().getTime());
    this.clock = next.clock;
    const res = await request(this.t.app.getHttpServer())
      .post('/api/sync/push')
      .set('authorization', `Bearer ${this.token}`)
      .send({
        protocol: PROTOCOL_VERSION,
        schemaVersion: SCHEMA_VERSION,
        changes: [
          {
            changeId: uuidv7(),
            collection,
            recordId,
            baseVersion,
            hlc: next.stamp,
            fields,
            ...extra,
          },
        ],
      });
    if (res.status !== 200)
      throw new Error(`push answered ${res.status}: ${JSON.stringify(res.body)}`);
    return res.body as PushResponse;
  }

  /** Many new records in one push; throws on any rejection. */
  async pushAll(
    records: { collection: string; recordId: string; fields: Record<string, JsonValue> }[],
  ): Promise<void> {
    const changes = records.map((r) => {
      const next = tick(this.clock, this.t.clock.now().getTime());
      this.clock = next.clock;
      return {
        changeId: uuidv7(),
        collection: r.collection,
        recordId: r.recordId,
        baseVersion: 0,
        hlc: next.stamp,
        fields: r.fields,
      };
    });
    const res = await request(this.t.app.getHttpServer())
      .post('/api/sync/push')
      .set('authorization', `Bearer ${this.token}`)
      .send({ protocol: PROTOCOL_VERSION, schemaVersion: SCHEMA_VERSION, changes });
    if (res.status !== 200)
      throw new Error(`push answered ${res.status}: ${JSON.stringify(res.body)}`);
    const rejected = (res.body as PushResponse).results.filter((r) => r.status === 'rejected');
    if (rejected.length > 0) throw new Error(`changes rejected: ${JSON.stringify(rejected)}`);
  }

  async pushOk(
    collection: string,
    recordId: string,
    fields: Record<string, JsonValue>,
    baseVersion = 0,
  ): Promise<number> {
    const body = await this.push(collection, recordId, fields, baseVersion);
    const result = body.results[0]!;
    if (result.status === 'rejected') throw new Error(`change rejected: ${result.error}`);
    return result.version;
  }
}

export async function tabletAt(
  t: TestApp,
  role: 'orthoptist' | 'admin' | 'supervisor',
  siteIds: string[],
): Promise<LetterTablet> {
  const person = await createUser(t, {
    role,
    siteIds,
    name: role === 'orthoptist' ? 'Wren Ashdown' : undefined,
  });
  const device = await createDevice(t, { siteIds: siteIds.length > 0 ? siteIds : [] });
  const session = await signIn(t, { user: person, device });
  return new LetterTablet(t, person, device.deviceId, session.accessToken);
}

export interface LetterScenario {
  siteId: string;
  otherSiteId: string;
  tablet: LetterTablet;
  patientId: string;
  visitId: string;
  letterId: string;
}

const strip = <T extends object>(value: T | null | undefined): Record<string, JsonValue> =>
  Object.fromEntries(
    Object.entries(value ?? {}).filter(([, v]) => v !== undefined && v !== null),
  ) as Record<string, JsonValue>;

/** The invented example patient, three visits with their sections and a draft letter, pushed. */
export async function pushLetterScenario(
  t: TestApp,
  options: { referrerEmail?: string | null } = {},
): Promise<LetterScenario> {
  const site = await createSite(t, {
    name: 'Harbourside Eye Clinic',
    address: '14 Quay Street, Port Averly',
  });
  const other = await createSite(t, { name: 'Elsewhere Clinic' });
  const tablet = await tabletAt(t, 'orthoptist', [site.id]);
  const patientId = uuidv7();
  const p = exampleLetterInput.patient;
  const records: { collection: string; recordId: string; fields: Record<string, JsonValue> }[] = [];
  records.push({
    collection: 'patient',
    recordId: patientId,
    fields: {
      siteId: site.id,
      givenName: p.givenName,
      familyName: p.familyName,
      dateOfBirth: p.dateOfBirth,
      clinicNumber: p.clinicNumber,
      referrer: {
        name: p.referrer!.name,
        ...(options.referrerEmail === null
          ? {}
          : { email: options.referrerEmail ?? p.referrer!.email! }),
      },
    },
  });
  let visitId = '';
  for (const findings of [exampleVisits.first, exampleVisits.second, exampleVisits.third]) {
    visitId = uuidv7();
    records.push({
      collection: 'visit',
      recordId: visitId,
      fields: {
        siteId: site.id,
        patientId,
        date: findings.visit.date,
        clinicianId: tablet.person.id,
        status: 'signed',
        reason: findings.visit.reason ?? null,
        signedBy: tablet.person.id,
        signedAt: `${findings.visit.date}T12:00:00.000Z`,
      },
    });
    for (const [collection, section] of Object.entries(findings)) {
      if (collection === 'visit') continue;
      records.push({
        collection,
        recordId: uuidv7(),
        fields: { ...strip(section), siteId: site.id, patientId, visitId },
      });
    }
  }
  const letterId = uuidv7();
  records.push({
    collection: 'letter',
    recordId: letterId,
    fields: { siteId: site.id, patientId, visitId, kind: 'referrer', status: 'draft' },
  });
  await tablet.pushAll(records);
  return { siteId: site.id, otherSiteId: other.id, tablet, patientId, visitId, letterId };
}
