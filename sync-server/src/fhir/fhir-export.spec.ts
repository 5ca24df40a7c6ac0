import request from 'supertest';
import type { Bundle, Observation, Resource } from 'fhir/r4';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CLINICAL_CAUTION } from '@fuselight/shared';
import { RecordStore } from '../records/record-store';
import { clinicalDemoRecords } from '../seed/clinical-demo.data';
import { demoToday } from '../seed/clinical-demo.seed';
import { DEMO_PEOPLE, DEMO_SITES } from '../seed/demo-scenario';
import { SeedService } from '../seed/seed.service';
import { tabletAt } from '../letters/testing/letters-test-kit';
import { bearer, signInAs } from '../testing/identity-factory';
import { startVersionsBelowPowerOfTen, versionLengths } from '../testing/version-boundary';
import { FhirExportService } from './fhir-export.service';
import { pushSignedVisit, type PushedVisit } from './testing/handoff-kit';
import { createTestApp, type TestApp } from '../testing/test-app';
import { FINDING_FIELDS, FUSELIGHT_CODE_SYSTEM, SNOMED_CT, UCUM } from './fhir-codes';
import { fhirErrors } from './testing/fhir-validator';
import { derivedId } from './visit-bundle';

const resourcesOf = (bundle: Bundle): Resource[] => (bundle.entry ?? []).map((e) => e.resource!);
const ofType = <T extends Resource>(bundle: Bundle, type: T['resourceType']): T[] =>
  resourcesOf(bundle).filter((r): r is T => r.resourceType === type);

describe('the FHIR export of one visit', () => {
  let t: TestApp;
  let supervisor: string;
  let mainClinician: string;
  let outreachClinician: string;
  let admin: string;
  const demo = clinicalDemoRecords({ today: demoToday(new Date('2026-12-01T09:00:00.000Z')) });
  const signedVisits = demo.filter((r) => r.collection === 'visit' && r.fields.status === 'signed');
  const draftVisit = demo.find((r) => r.collection === 'visit' && r.fields.status === 'draft')!;
  const mainVisit = signedVisits.find((v) => v.fields.siteId === DEMO_SITES.main.id)!;

  const get = (path: string, token: string) =>
    request(t.app.getHttpServer()).get(path).set(bearer(token));

  beforeAll(async () => {
    t = await createTestApp();
    await t.app.get(SeedService).run();
    const both = [DEMO_SITES.main.id, DEMO_SITES.outreach.id];
    supervisor = (await signInAs(t, { role: 'supervisor', siteIds: both })).accessToken;
    mainClinician = (await signInAs(t, { role: 'orthoptist', siteIds: [DEMO_SITES.main.id] }))
      .accessToken;
    outreachClinician = (await signInAs(t, { role: 'outreach', siteIds: [DEMO_SITES.outreach.id] }))
      .accessToken;
    admin = (await signInAs(t, { role: 'admin', siteIds: [] })).accessToken;
  });
  afterAll(async () => {
    await t.close();
  });

  it('answers every demo visit with a collection Bundle that the fhir package validates with no error', async () => {
    expect(signedVisits.length).toBeGreaterThan(5);
    for (const visit of signedVisits) {
      const res = await get(`/api/visits/${visit.id}/fhir`, supervisor).expect(200);
      expect(res.headers['content-type']).toMatch(/^application\/fhir\+json/);
      const bundle = JSON.parse(res.text) as Bundle;
      expect(bundle).toMatchObject({ resourceType: 'Bundle', type: 'collection' });
      expect(fhirErrors(bundle)).toEqual([]);
      for (const resource of resourcesOf(bundle)) expect(fhirErrors(resource)).toEqual([]);
      const kinds = new Set(resourcesOf(bundle).map((r) => r.resourceType));
      expect([...kinds].sort()).toEqual(
        ['Encounter', 'Observation', 'Patient', 'Practitioner', 'Provenance'].sort(),
      );
    }
  });

  it('writes each recorded value exactly as stored, with its UCUM unit and a code of a named system', async () => {
    const store = t.app.get(RecordStore);
    let checked = 0;
    for (const visit of signedVisits) {
      const bundle = JSON.parse(
        (await get(`/api/visits/${visit.id}/fhir`, supervisor)).text,
      ) as Bundle;
      const observations = ofType<Observation>(bundle, 'Observation');
      const sections = demo.filter(
        (r) => r.fields.visitId === visit.id && r.collection !== 'addendum',
      );
      for (const section of sections) {
        const stored = (await store.byId(t.em(), section.id))!;
        for (const finding of FINDING_FIELDS.filter((f) => f.collection === section.collection)) {
          const value = stored.fields[finding.field];
          if (value === undefined || value === null) continue;
          const observation = observations.find(
            (o) => o.id === derivedId(section.id, finding.field),
          );
          expect(observation, `${finding.code} of ${section.id}`).toBeDefined();
          expect(observation!.code.coding).toContainEqual(
            expect.objectContaining({ system: FUSELIGHT_CODE_SYSTEM, code: finding.code }),
          );
          if (typeof value === 'number') {
            expect(observation!.valueQuantity?.value).toBe(value);
            expect(observation!.valueQuantity?.system).toBe(UCUM);
          } else if (typeof value === 'boolean') {
            expect(observation!.valueBoolean).toBe(value);
          } else if (finding.meta.kind === 'choice') {
            expect(observation!.valueCodeableConcept?.coding?.[0]?.code).toBe(
              `${finding.code}.${String(value)}`,
            );
          } else if (typeof value === 'string') {
            expect(observation!.valueString).toBe(value);
          }
          checked += 1;
        }
      }
    }
    expect(checked).toBeGreaterThan(100);
  });

  it('codes acuity with the SNOMED CT concepts of the Eye Care visual acuity value set and the eye as body site', async () => {
    const withAcuity = signedVisits.find((v) =>
      demo.some((r) => r.collection === 'visualAcuity' && r.fields.visitId === v.id),
    )!;
    const acuity = demo.find(
      (r) => r.collection === 'visualAcuity' && r.fields.visitId === withAcuity.id,
    )!;
    const bundle = JSON.parse(
      (await get(`/api/visits/${withAcuity.id}/fhir`, supervisor)).text,
    ) as Bundle;
    const byField = (field: string) =>
      ofType<Observation>(bundle, 'Observation').find((o) => o.id === derivedId(acuity.id, field));
    const distanceField = Object.keys(acuity.fields).find(
      (f) => /^right.*Distance.*LogMar$/i.test(f) || /^rightDistance.*LogMar$/.test(f),
    )!;
    const right = byField(distanceField)!;
    // SNOMED CT 251739003 "Distance visual acuity": HL7 Eye Care IG (hl7.org/fhir/uv/eyecare),
    // visual acuity value set; the same concept is in HL7's CDA eye care guide's
    // VisualAcuityObservationCodes.
    expect(right.code.coding).toContainEqual({
      system: SNOMED_CT,
      code: '251739003',
      display: 'Distance visual acuity',
    });
    // SNOMED CT 362502000 "Entire right eye": HL7 CDA eye care guide, VisualAcuityTargetSiteCodes
    // (display [memory]).
    expect(right.bodySite?.coding?.[0]).toMatchObject({ system: SNOMED_CT, code: '362502000' });
    // logMAR: dimensionless UCUM "1" with the unit text logMAR.
    expect(right.valueQuantity).toEqual({
      value: acuity.fields[distanceField],
      unit: 'logMAR',
      system: UCUM,
      code: '1',
    });
  });

  it('names the patient, the clinic number under a URI of the site, the signer and a finished encounter', async () => {
    const bundle = JSON.parse(
      (await get(`/api/visits/${mainVisit.id}/fhir`, mainClinician).expect(200)).text,
    ) as Bundle;
    const patientRecord = demo.find((r) => r.id === mainVisit.fields.patientId)!;
    const [patient] = ofType<import('fhir/r4').Patient>(bundle, 'Patient');
    expect(patient).toMatchObject({
      id: patientRecord.id,
      birthDate: patientRecord.fields.dateOfBirth,
      gender: patientRecord.fields.sex,
      name: [{ family: patientRecord.fields.familyName, given: [patientRecord.fields.givenName] }],
      identifier: [
        {
          system: `https://fuselight.app/fhir/NamingSystem/clinic-number/${DEMO_SITES.main.id}`,
          value: patientRecord.fields.clinicNumber,
        },
      ],
    });
    const [encounter] = ofType<import('fhir/r4').Encounter>(bundle, 'Encounter');
    expect(encounter).toMatchObject({ id: mainVisit.id, status: 'finished' });
    const provenance = ofType<import('fhir/r4').Provenance>(bundle, 'Provenance');
    expect(provenance[0]).toMatchObject({ recorded: mainVisit.fields.signedAt });
    const practitioners = ofType<import('fhir/r4').Practitioner>(bundle, 'Practitioner');
    expect(practitioners.map((p) => p.name?.[0]?.text)).toContain(DEMO_PEOPLE.orthoptist.name);
    for (const observation of ofType<Observation>(bundle, 'Observation')) {
      expect(observation.subject?.reference).toBe(`urn:uuid:${patient!.id!}`);
      expect(observation.encounter?.reference).toBe(`urn:uuid:${encounter!.id!}`);
      expect(observation.effectiveDateTime).toBe(mainVisit.fields.date);
      expect(observation.category?.[0]?.coding?.[0]?.code).toBe('exam');
    }
  });

  it('exports the interpretations with the caution in their note', async () => {
    let seen = 0;
    for (const visit of signedVisits) {
      const bundle = JSON.parse(
        (await get(`/api/visits/${visit.id}/fhir`, supervisor)).text,
      ) as Bundle;
      for (const o of ofType<Observation>(bundle, 'Observation')) {
        if (!o.code.coding?.[0]?.code?.startsWith('interpretation.')) continue;
        expect(o.note?.[0]?.text).toBe(CLINICAL_CAUTION);
        expect(o.valueString?.length).toBeGreaterThan(10);
        seen += 1;
      }
    }
    expect(seen).toBeGreaterThan(5);
  });

  it('marks the findings of a visit with an Addendum amended, with the Addendum as a note and a Provenance', async () => {
    const addendum = demo.find((r) => r.collection === 'addendum')!;
    const bundle = JSON.parse(
      (await get(`/api/visits/${String(addendum.fields.visitId)}/fhir`, supervisor)).text,
    ) as Bundle;
    const findings = ofType<Observation>(bundle, 'Observation');
    expect(findings.length).toBeGreaterThan(0);
    for (const o of findings) {
      expect(o.status).toBe('amended');
      expect(o.note?.map((n) => n.text)).toContain(`Addendum: ${String(addendum.fields.text)}`);
    }
    const provenance = ofType<import('fhir/r4').Provenance>(bundle, 'Provenance');
    expect(provenance.map((p) => p.activity?.text)).toEqual(['Signed', 'Addendum']);
  });

  it('adds the countersigning supervisor and a verification Provenance once countersigned', async () => {
    const waiting = demo.find(
      (r) => r.collection === 'visit' && r.fields.needsCountersign === true,
    )!;
    const people = await signInAs(t, {
      role: 'supervisor',
      siteIds: [String(waiting.fields.siteId)],
    });
    await request(t.app.getHttpServer())
      .post(`/api/review/visits/${waiting.id}/countersign`)
      .set(bearer(people.accessToken))
      .send({})
      .expect(200);
    const bundle = JSON.parse(
      (await get(`/api/visits/${waiting.id}/fhir`, supervisor)).text,
    ) as Bundle;
    expect(fhirErrors(bundle)).toEqual([]);
    const provenance = ofType<import('fhir/r4').Provenance>(bundle, 'Provenance');
    expect(provenance.map((p) => p.activity?.text)).toEqual(['Signed', 'Countersigned']);
    expect(provenance[1]?.signature?.[0]?.type[0]?.code).toBe('1.2.840.10065.1.12.1.5');
    const names = ofType<import('fhir/r4').Practitioner>(bundle, 'Practitioner').map(
      (p) => p.name?.[0]?.text,
    );
    expect(names).toContain(people.person.name);
  });

  it('exports a draft visit with preliminary findings and its encounter in progress', async () => {
    const res = await get(`/api/visits/${draftVisit.id}/fhir`, supervisor).expect(200);
    const bundle = JSON.parse(res.text) as Bundle;
    expect(fhirErrors(bundle)).toEqual([]);
    expect(ofType<import('fhir/r4').Encounter>(bundle, 'Encounter')[0]?.status).toBe('in-progress');
    expect(ofType<import('fhir/r4').Provenance>(bundle, 'Provenance')).toEqual([]);
    for (const o of ofType<Observation>(bundle, 'Observation'))
      expect(o.status).toBe('preliminary');
  });

  it('answers 404 outside the visit site, 403 to an admin and 400 naming a bad id', async () => {
    await get(`/api/visits/${mainVisit.id}/fhir`, outreachClinician).expect(404);
    // A supervisor of another site only is no supervisor of this visit.
    const otherSupervisor = await signInAs(t, {
      role: 'supervisor',
      siteIds: [DEMO_SITES.outreach.id],
    });
    await get(`/api/visits/${mainVisit.id}/fhir`, otherSupervisor.accessToken).expect(404);
    const forbidden = await get(`/api/visits/${mainVisit.id}/fhir`, admin).expect(403);
    expect(JSON.stringify(forbidden.body)).toMatch(/admin/);
    await get(`/api/visits/01935a10-0002-7000-8000-0000000fffff/fhir`, supervisor).expect(404);
    const bad = await get('/api/visits/not-a-visit/fhir', supervisor).expect(400);
    expect(JSON.stringify(bad.body)).toContain('id must be a visit id');
  });
});

describe('the FHIR bulk export', () => {
  let t: TestApp;
  let supervisor: Awaited<ReturnType<typeof signInAs>>;
  let outreachSupervisor: string;
  let clinician: string;
  const later: PushedVisit[] = [];
  const demo = clinicalDemoRecords({ today: demoToday(new Date('2026-12-01T09:00:00.000Z')) });
  const signedDemoVisits = demo.filter(
    (r) => r.collection === 'visit' && r.fields.status === 'signed',
  );

  const lines = (text: string): Resource[] =>
    text
      .split('\n')
      .filter((line) => line !== '')
      .map((line) => JSON.parse(line) as Resource);

  beforeAll(async () => {
    t = await createTestApp();
    await t.app.get(SeedService).run();
    // Data that has lived: later visits are numbered with one digit more than the demo's.
    await startVersionsBelowPowerOfTen(t.db.url, { transactionsBefore: 1 });
    const tablet = await tabletAt(t, 'orthoptist', [DEMO_SITES.main.id]);
    for (let i = 0; i < 5; i += 1) later.push(await pushSignedVisit(tablet, DEMO_SITES.main.id));
    const both = [DEMO_SITES.main.id, DEMO_SITES.outreach.id];
    supervisor = await signInAs(t, { role: 'supervisor', siteIds: both });
    outreachSupervisor = (
      await signInAs(t, { role: 'supervisor', siteIds: [DEMO_SITES.outreach.id] })
    ).accessToken;
    clinician = (await signInAs(t, { role: 'orthoptist', siteIds: both })).accessToken;
  });
  afterAll(async () => {
    await t.close();
  });

  it('streams every resource of the signed visits once, each valid, as application/fhir+ndjson', async () => {
    const res = await request(t.app.getHttpServer())
      .get('/api/fhir/export?since=2000-01-01T00:00:00Z')
      .set(bearer(supervisor.accessToken))
      .buffer(true)
      .parse((r, done) => {
        let text = '';
        r.on('data', (c: Buffer) => (text += c.toString('utf8')));
        r.on('end', () => done(null, text));
      })
      .expect(200);
    expect(res.headers['content-type']).toMatch(/^application\/fhir\+ndjson/);
    const resources = lines(res.body as string);
    for (const resource of resources) expect(fhirErrors(resource)).toEqual([]);
    const keys = resources.map((r) => `${r.resourceType}/${r.id!}`);
    expect(new Set(keys).size).toBe(keys.length);
    const encounters = resources.filter((r) => r.resourceType === 'Encounter').map((r) => r.id);
    expect(encounters.sort()).toEqual(
      [...signedDemoVisits.map((v) => v.id), ...later.map((v) => v.visitId)].sort(),
    );
    // Every patient of the site is there, also those with only today's draft booking.
    const patients = resources.filter((r) => r.resourceType === 'Patient').map((r) => r.id);
    expect(patients.sort()).toEqual(
      [
        ...demo.filter((r) => r.collection === 'patient').map((r) => r.id),
        ...later.map((v) => v.patientId),
      ].sort(),
    );
  });

  it('reads in pages across the change of digit count without losing or repeating a resource', async () => {
    const store = t.app.get(RecordStore);
    const versions = await Promise.all(
      [signedDemoVisits[0]!.id, later[0]!.visitId].map(
        async (id) => (await store.byId(t.em(), id))!.version,
      ),
    );
    expect(versionLengths(versions).length).toBe(2);
    const exports = t.app.get(FhirExportService);
    const user = {
      userId: supervisor.person.id,
      role: 'supervisor' as const,
      siteIds: supervisor.person.siteIds,
      deviceId: null,
      sessionId: 'spec',
    };
    const read = async (pageSize: number) => {
      let text = '';
      for await (const chunk of exports.bulkLines(
        user,
        user.siteIds,
        new Date('2000-01-01T00:00:00Z'),
        pageSize,
      ))
        text += chunk;
      return lines(text).map((r) => `${r.resourceType}/${r.id!}`);
    };
    const whole = await read(10_000);
    const paged = await read(3);
    expect(paged.length).toBe(whole.length);
    expect(new Set(paged)).toEqual(new Set(whole));
  });

  it('sends only what changed since the time, only in the site asked for', async () => {
    t.clock.advance(60_000);
    const since = t.clock.now().toISOString();
    t.clock.advance(60_000);
    const tablet = await tabletAt(t, 'orthoptist', [DEMO_SITES.main.id]);
    const fresh = await pushSignedVisit(tablet, DEMO_SITES.main.id);
    const res = await request(t.app.getHttpServer())
      .get(`/api/fhir/export?since=${encodeURIComponent(since)}&site=${DEMO_SITES.main.id}`)
      .set(bearer(supervisor.accessToken))
      .expect(200);
    const resources = lines(res.text);
    expect(resources.filter((r) => r.resourceType === 'Encounter').map((r) => r.id)).toEqual([
      fresh.visitId,
    ]);
    const outreach = await request(t.app.getHttpServer())
      .get(`/api/fhir/export?since=${encodeURIComponent(since)}&site=${DEMO_SITES.outreach.id}`)
      .set(bearer(supervisor.accessToken))
      .expect(200);
    expect(outreach.text).toBe('');
  });

  it('is for supervisors of the site only, and names a bad parameter', async () => {
    const server = t.app.getHttpServer();
    await request(server)
      .get('/api/fhir/export?since=2000-01-01T00:00:00Z')
      .set(bearer(clinician))
      .expect(403);
    const other = await request(server)
      .get(`/api/fhir/export?since=2000-01-01T00:00:00Z&site=${DEMO_SITES.main.id}`)
      .set(bearer(outreachSupervisor))
      .expect(403);
    expect(other.headers['content-type']).toMatch(/^application\/json/);
    expect(JSON.stringify(other.body)).toContain(
      `site: ${DEMO_SITES.main.id} is not one of the sites`,
    );
    const bad = await request(server)
      .get('/api/fhir/export?since=yesterday')
      .set(bearer(supervisor.accessToken))
      .expect(400);
    expect(JSON.stringify(bad.body)).toContain('since: give the time as ISO 8601');
  });
});
