#!/usr/bin/env node
// Local stand-ins for the production relays, on loopback only: an SMTP server with an inbox
// page (maildev), an S3-compatible store (s3rver) and a FHIR server standing in for the hospital
// record (fake-fhir-receiver.mjs). `npm start` runs this as a child process.
//   SMTP_PORT (1025)  MAILDEV_WEB_PORT (1080)  S3_PORT (4569)  S3_DIR  S3_BUCKET  FHIR_FAKE_PORT (8088)
import { mkdirSync } from 'node:fs';
import { createRequire } from 'node:module';
import { join } from 'node:path';
import { startFakeFhirReceiver } from './fake-fhir-receiver.mjs';
import { repoRoot } from './lib.mjs';

const require = createRequire(join(repoRoot, 'sync-server', 'package.json'));
const MailDev = require('maildev');
const S3rver = require('s3rver');

const smtpPort = Number(process.env.SMTP_PORT ?? 1025);
const webPort = Number(process.env.MAILDEV_WEB_PORT ?? 1080);
const s3Port = Number(process.env.S3_PORT ?? 4569);
const s3Dir = process.env.S3_DIR ?? join(repoRoot, '.fuselight', 's3');
const bucket = process.env.S3_BUCKET ?? 'fuselight-attachments';
mkdirSync(s3Dir, { recursive: true });

const maildev = new MailDev({
  smtp: smtpPort,
  web: webPort,
  ip: '127.0.0.1',
  silent: true,
  disableWeb: false,
});
await new Promise((resolve, reject) =>
  maildev.listen((error) => (error ? reject(error) : resolve())),
);

const s3 = new S3rver({
  port: s3Port,
  address: '127.0.0.1',
  silent: true,
  directory: s3Dir,
  configureBuckets: [{ name: bucket }],
});
await s3.run();

const fhir = await startFakeFhirReceiver({ port: Number(process.env.FHIR_FAKE_PORT ?? 8088) });

console.log(
  `fakes ready: smtp 127.0.0.1:${smtpPort}, inbox http://127.0.0.1:${webPort}, s3 http://127.0.0.1:${s3Port} bucket ${bucket}, fhir ${fhir.url} (page ${fhir.page})`,
);

const stop = async () => {
  await new Promise((resolve) => maildev.close(() => resolve()));
  await s3.close();
  await fhir.close();
  process.exit(0);
};
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
