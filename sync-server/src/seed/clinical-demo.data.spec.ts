import { classifyCorrespondence, validateRecord } from '@fuselight/shared';
import { describe, expect, it } from 'vitest';
import {
  DEMO_PATIENT_COUNT,
  DEMO_STORY_PATIENTS,
  clinicalDemoRecords,
  demoRecordId,
} from './clinical-demo.data';
import { DEMO_SITES } from './demo-scenario';

const records = clinicalDemoRecords({ today: '2026-12-01' });

describe('the clinical demo scenario', () => {
  it('passes the shared record schema for every record it writes', () => {
    const failures = records
      .map((record) => ({ record, result: validateRecord(record.collection, record.fields) }))
      .filter(({ result }) => !result.ok);
    expect(failures.map(({ record, result }) => [record.collection, record.id, result])).toEqual(
      [],
    );
  });

  it('uses unique record ids', () => {
    expect(new Set(records.map((r) => r.id)).size).toBe(records.length);
  });

  it('holds a dozen or more patients with several visits at both demo sites', () => {
    expect(DEMO_PATIENT_COUNT).toBeGreaterThanOrEqual(12);
    const patients = records.filter((r) => r.collection === 'patient');
    const sites = new Set(patients.map((p) => p.fields.siteId));
    expect(sites).toEqual(new Set([DEMO_SITES.main.id, DEMO_SITES.outreach.id]));
    const pastVisits = records.filter(
      (r) => r.collection === 'visit' && r.fields.status !== 'draft',
    );
    expect(pastVisits.length).toBeGreaterThanOrEqual(2 * DEMO_PATIENT_COUNT);
  });

  it('books draft visits on the seeding day', () => {
    const booked = records.filter(
      (r) => r.collection === 'visit' && r.fields.date === '2026-12-01',
    );
    expect(booked.length).toBeGreaterThan(0);
    expect(booked.every((v) => v.fields.status === 'draft')).toBe(true);
  });

  it('charts a patient whose horizontal deviation grows from visit to visit', () => {
    const visits = records
      .filter(
        (r) =>
          r.collection === 'visit' && r.fields.patientId === DEMO_STORY_PATIENTS.changingDeviation,
      )
      .filter((v) => v.fields.status === 'signed');
    const objectiveAngles = visits.map((visit) => {
      const angles = records.find(
        (r) => r.collection === 'amblyoscopeAngles' && r.fields.visitId === visit.id,
      );
      return Math.abs(angles?.fields.objectiveHorizontalDeg as number);
    });
    expect(objectiveAngles.length).toBeGreaterThanOrEqual(3);
    for (let i = 1; i < objectiveAngles.length; i += 1) {
      expect(objectiveAngles[i]).toBeGreaterThan(objectiveAngles[i - 1]!);
    }
  });

  it('charts a patient whose angles classify as harmonious ARC', () => {
    const visit = records.find(
      (r) => r.collection === 'visit' && r.fields.patientId === DEMO_STORY_PATIENTS.harmoniousArc,
    );
    const angles = records.find(
      (r) => r.collection === 'amblyoscopeAngles' && r.fields.visitId === visit?.id,
    );
    const result = classifyCorrespondence({
      objectiveDeg: angles?.fields.objectiveHorizontalDeg as number,
      subjectiveDeg: angles?.fields.subjectiveHorizontalDeg as number,
    });
    expect(result.result).toBe('harmonious ARC');
  });

  it('adds to a signed visit through addendum records, never by a marker in a plan', () => {
    const addenda = records.filter((r) => r.collection === 'addendum');
    expect(addenda.length).toBeGreaterThan(0);
    for (const addendum of addenda) {
      const visit = records.find(
        (r) => r.collection === 'visit' && r.id === addendum.fields.visitId,
      );
      expect(visit?.fields.status).toBe('signed');
      expect(addendum.fields.patientId).toBe(visit?.fields.patientId);
      expect(String(addendum.fields.writtenAt) > String(visit?.fields.signedAt)).toBe(true);
    }
    const plans = records.filter((r) => r.collection === 'plan');
    expect(plans.some((p) => String(p.fields.impression ?? '').startsWith('Addendum'))).toBe(false);
  });

  it('makes ids that are version-7 UUIDs', () => {
    expect(demoRecordId('fusion', 42)).toMatch(
      /^[0-9a-f]{8}-[0-9a-f]{4}-7[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}$/,
    );
  });
});
