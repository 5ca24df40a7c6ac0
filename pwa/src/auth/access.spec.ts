import { describe, expect, it } from 'vitest';
import { canSee, homeFor } from './access';

describe('what each role sees', () => {
  it('keeps admins out of every clinical screen and gives them the Fleet', () => {
    expect(canSee('admin', 'clinical')).toBe(false);
    expect(canSee('admin', 'review')).toBe(false);
    expect(canSee('admin', 'admin')).toBe(true);
    expect(homeFor('admin')).toBe('/fleet');
  });

  it('gives supervisors the Review desk and clinicians neither it nor the admin screens', () => {
    expect(canSee('supervisor', 'review')).toBe(true);
    expect(canSee('orthoptist', 'review')).toBe(false);
    expect(canSee('outreach', 'admin')).toBe(false);
    expect(homeFor('outreach')).toBe('/today');
  });

  it('shows nothing to nobody', () => {
    expect(canSee(undefined, 'self')).toBe(false);
  });
});
