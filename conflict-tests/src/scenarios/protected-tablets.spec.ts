// Protected tablets against the real server: after charting on one tablet and syncing both ways,
// every store of both tablets' databases, read raw, holds no name, date of birth, clinic number
// or finding in plain text, while the repositories read them back whole (docs/threat-model.md).
import type { TestUser } from '@server/testing/identity-factory';
import { DataKeyVault } from '@pwa/data/crypto/data-key-vault';
import { newDataKey } from '@pwa/data/crypto/key-slots';
import { rawDump } from '@pwa/data/crypto/raw-dump.fixture';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startClinic, type Clinic } from '../harness/clinic-server';
import { SimTablet } from '../harness/sim-tablet';

let clinic: Clinic;
let nurse: TestUser;
const tablets: SimTablet[] = [];

beforeAll(async () => {
  clinic = await startClinic();
  nurse = await clinic.person('orthoptist');
});

afterAll(async () => {
  for (const tablet of tablets) await tablet.close();
  await clinic?.close();
});

async function protectedTablet(name: string): Promise<SimTablet> {
  const vault = new DataKeyVault();
  vault.hold(await newDataKey());
  const tablet = await SimTablet.create(clinic, name, [nurse], { vault });
  tablets.push(tablet);
  return tablet;
}

const SECRETS = ['Zanele', 'Okonkwo-Baptiste', '2015-07-23', 'FL-998877', 'Intermittent exotropia'];

describe('protected tablets', () => {
  it('hold only ciphertext after charting and syncing, and read every value back', async () => {
    const charting = await protectedTablet('charting');
    const reading = await protectedTablet('reading');
    const patientId = await charting.create('patient', {
      siteId: clinic.siteId,
      givenName: 'Zanele',
      familyName: 'Okonkwo-Baptiste',
      dateOfBirth: '2015-07-23',
      clinicNumber: 'FL-998877',
    });
    const visitId = await charting.create('visit', {
      siteId: clinic.siteId,
      patientId,
      date: '2026-12-01',
      clinicianId: nurse.id,
      status: 'draft',
    });
    await charting.create('plan', {
      siteId: clinic.siteId,
      patientId,
      visitId,
      impression: 'Intermittent exotropia, worse for distance',
    });
    // Before the push: the Outbox entries are sealed too.
    for (const secret of SECRETS)
      expect((await rawDump(charting.db.name)).text).not.toContain(secret);
    expect((await charting.syncUntilSettled()).kind).toBe('synced');
    expect((await reading.syncUntilSettled()).kind).toBe('synced');

    const pulled = await reading.get('patient', patientId);
    expect(pulled?.fields).toMatchObject({
      familyName: 'Okonkwo-Baptiste',
      clinicNumber: 'FL-998877',
    });
    expect(
      (await reading.records.listByField('plan', 'visitId', visitId))[0]?.fields,
    ).toMatchObject({
      impression: 'Intermittent exotropia, worse for distance',
    });
    expect((await reading.records.searchPatients('okonkwo')).map((p) => p.id)).toEqual([patientId]);

    for (const tablet of [charting, reading]) {
      const { text, stores } = await rawDump(tablet.db.name);
      expect(stores).toEqual(['keySlots', 'meta', 'outbox', 'records']);
      for (const secret of SECRETS) expect(text).not.toContain(secret);
      // The index fields are what stays readable: ids only.
      expect(text).toContain(patientId);
    }
  });
});
