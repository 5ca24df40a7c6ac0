// A local stand-in for the hospital's FHIR server, on loopback only. It takes a Bundle POSTed to
// its base (the hand-off sends a `transaction`), validates it with the `fhir` package (FHIR R4
// core definitions), keeps what it accepted, and answers like a FHIR server: 201 with a Location
// and a transaction-response Bundle, or 400 with an OperationOutcome naming what is invalid. Its
// page at / lists what it received. `npm start` runs it from fakes.mjs; the server's tests start
// one per test file (sync-server/src/fhir/testing), sometimes told to fail or refuse.
import { randomUUID } from 'node:crypto';
import { createServer } from 'node:http';
import { createRequire } from 'node:module';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

const repoRoot = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const require = createRequire(join(repoRoot, 'sync-server', 'package.json'));
const { Fhir } = require('fhir');
const validator = new Fhir();

const escapeHtml = (text) =>
  String(text).replace(
    /[&<>"']/g,
    (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c],
  );

function outcome(status, issues) {
  return {
    status,
    body: {
      resourceType: 'OperationOutcome',
      issue: issues.map((diagnostics) => ({ severity: 'error', code: 'invalid', diagnostics })),
    },
  };
}

/** Errors the `fhir` package finds in a resource, as `location: message`. */
export function validationErrors(resource) {
  const result = validator.validate(resource, { errorOnUnexpected: true });
  return result.messages
    .filter((m) => m.severity === 'error' || m.severity === 'fatal')
    .map((m) => `${m.location ?? ''}: ${m.message ?? ''}`);
}

/**
 * Starts the receiver. `port` 0 picks a free port. `failNext(n, status)` makes the next n
 * requests fail with that status (503 by default); `refuseWith(text)` refuses every Bundle with
 * a 400 OperationOutcome saying `text` until called with null.
 */
export async function startFakeFhirReceiver({ port = 0, host = '127.0.0.1' } = {}) {
  const received = [];
  let failures = { count: 0, status: 503 };
  let refusal = null;
  const answer = (bundle) => {
    if (failures.count > 0) {
      failures = { ...failures, count: failures.count - 1 };
      return outcome(failures.status, ['the FHIR server is busy; try again later']);
    }
    if (!bundle || typeof bundle !== 'object' || bundle.resourceType !== 'Bundle') {
      return outcome(400, ['the body must be a FHIR Bundle']);
    }
    if (bundle.type !== 'transaction') {
      return outcome(400, [`Bundle.type must be transaction, got ${String(bundle.type)}`]);
    }
    const errors = validationErrors(bundle);
    if (errors.length > 0) return outcome(400, errors);
    if (refusal) return outcome(400, [refusal]);
    const id = randomUUID();
    received.push({ id, at: new Date().toISOString(), bundle });
    return {
      status: 201,
      location: `Bundle/${id}/_history/1`,
      body: {
        resourceType: 'Bundle',
        id,
        type: 'transaction-response',
        entry: (bundle.entry ?? []).map((entry) => ({
          response: {
            status: '201 Created',
            location: `${entry.resource?.resourceType}/${entry.resource?.id}/_history/1`,
          },
        })),
      },
    };
  };

  const page = () => {
    const rows = received
      .map((r) => {
        const entries = r.bundle.entry ?? [];
        const patient = entries.find((e) => e.resource?.resourceType === 'Patient')?.resource;
        const encounter = entries.find((e) => e.resource?.resourceType === 'Encounter')?.resource;
        const identifier = patient?.identifier?.[0]?.value ?? patient?.id ?? '';
        return `<tr><td>${escapeHtml(r.at)}</td><td>${escapeHtml(identifier)}</td><td>${escapeHtml(
          encounter?.period?.start ?? '',
        )}</td><td>${entries.length}</td><td><a href="/received/${escapeHtml(r.id)}">${escapeHtml(
          r.id,
        )}</a></td></tr>`;
      })
      .reverse()
      .join('');
    return `<!doctype html><html lang="en"><head><meta charset="utf-8"><title>Fake hospital record (FHIR)</title></head><body><h1>Fake hospital record: FHIR Bundles received</h1>${
      received.length === 0
        ? '<p>Nothing received yet. Sign a visit with FHIR_BASE_URL pointing here.</p>'
        : `<table><thead><tr><th scope="col">Received</th><th scope="col">Clinic number</th><th scope="col">Visit date</th><th scope="col">Resources</th><th scope="col">Bundle</th></tr></thead><tbody>${rows}</tbody></table>`
    }</body></html>`;
  };

  const server = createServer((req, res) => {
    const send = (status, body, headers = {}) => {
      res.writeHead(status, headers);
      res.end(body);
    };
    if (req.method === 'GET' && (req.url === '/' || req.url === '')) {
      send(200, page(), { 'content-type': 'text/html; charset=utf-8' });
      return;
    }
    const detail = /^\/received\/([0-9a-f-]+)$/.exec(req.url ?? '');
    if (req.method === 'GET' && detail) {
      const found = received.find((r) => r.id === detail[1]);
      if (found)
        send(200, JSON.stringify(found.bundle, null, 2), {
          'content-type': 'application/fhir+json',
        });
      else
        send(404, JSON.stringify(outcome(404, ['no such Bundle']).body), {
          'content-type': 'application/fhir+json',
        });
      return;
    }
    if (req.method !== 'POST' || !['/', '/fhir', '/fhir/'].includes(req.url ?? '')) {
      send(404, JSON.stringify(outcome(404, [`no route ${req.method} ${req.url}`]).body), {
        'content-type': 'application/fhir+json',
      });
      return;
    }
    const chunks = [];
    req.on('data', (c) => chunks.push(c));
    req.on('end', () => {
      let bundle;
      try {
        bundle = JSON.parse(Buffer.concat(chunks).toString('utf8'));
      } catch {
        bundle = null;
      }
      const result = answer(bundle);
      send(result.status, JSON.stringify(result.body), {
        'content-type': 'application/fhir+json',
        ...(result.location ? { location: result.location } : {}),
      });
    });
  });
  await new Promise((resolveListen, reject) => {
    server.once('error', reject);
    server.listen(port, host, resolveListen);
  });
  const address = server.address();
  const url = `http://${host}:${address.port}/fhir`;
  return {
    url,
    page: `http://${host}:${address.port}/`,
    received,
    failNext(count, status = 503) {
      failures = { count, status };
    },
    refuseWith(text) {
      refusal = text;
    },
    close: () => new Promise((resolveClose) => server.close(() => resolveClose())),
  };
}
