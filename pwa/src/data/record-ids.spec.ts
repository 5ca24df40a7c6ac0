import { validateFields } from '@fuselight/shared';
import { describe, expect, it } from 'vitest';
import { sectionRecordId } from './record-ids';

const visitA = '0193a1b2-0000-7000-8000-0000000000aa';
const visitB = '0193a1b2-0000-7000-8000-0000000000bb';

describe('section record ids', () => {
  it('are the same on every tablet for one visit and Section', () => {
    expect(sectionRecordId(visitA, 'coverTest')).toBe(sectionRecordId(visitA, 'coverTest'));
  });

  it('differ between Sections and between visits', () => {
    const ids = new Set([
      sectionRecordId(visitA, 'coverTest'),
      sectionRecordId(visitA, 'visualAcuity'),
      sectionRecordId(visitB, 'coverTest'),
    ]);
    expect(ids.size).toBe(3);
  });

  it('are name-based UUIDs (version 5) that the shared id schema accepts', () => {
    const id = sectionRecordId(visitA, 'amblyoscopeAngles');
    expect(id).toMatch(/^[0-9a-f]{8}-[0-9a-f]{4}-5[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}$/);
    expect(validateFields('coverTest', { visitId: id }).ok).toBe(true);
  });
});
