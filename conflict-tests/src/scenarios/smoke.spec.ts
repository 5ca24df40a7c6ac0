import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startClinic, type Clinic } from '../harness/clinic-server';
import { SimTablet } from '../harness/sim-tablet';

let clinic: Clinic;
beforeAll(async () => {
  clinic = await startClinic();
});
afterAll(async () => {
  await clinic?.close();
});

describe('smoke', () => {
  it('pushes a patient from one tablet and pulls it on another', async () => {
    const nurse = await clinic.person('orthoptist');
    const a = await SimTablet.create(clinic, 'a', [nurse]);
    const b = await SimTablet.create(clinic, 'b', [nurse]);
    const id = await a.create('patient', {
      siteId: clinic.siteId,
      givenName: 'Amara',
      familyName: 'Okafor',
      dateOfBirth: '2016-04-09',
      clinicNumber: 'FL-1',
    });
    const outcome = await a.sync();
    console.log(outcome, a.engine.snapshot());
    expect(outcome.kind).toBe('synced');
    await b.sync();
    expect((await b.get('patient', id))?.fields.familyName).toBe('Okafor');
  });
});
