// The Disputes list's query, as both the server (parsing the query string) and the tablet
// (building it) read it.
import { describe, expect, it } from 'vitest';
import { disputeQuerySchema } from './review-views';

describe('the Disputes list query', () => {
  it('fills in the oldest-first sort and a page of 25, and reads numbers from the query string', () => {
    expect(disputeQuerySchema.parse({})).toEqual({ sort: 'age', direction: 'asc', pageSize: 25 });
    expect(
      disputeQuerySchema.parse({ minAgeHours: '24', pageSize: '7', patient: '  tenby ' }),
    ).toMatchObject({ minAgeHours: 24, pageSize: 7, patient: 'tenby' });
  });

  it('names the field a bad value is in', () => {
    const messages = (input: Record<string, unknown>) => {
      const result = disputeQuerySchema.safeParse(input);
      return result.success ? [] : result.error.issues.map((i) => i.message);
    };
    expect(messages({ section: 'teeth' })).toEqual(['section: unknown section teeth']);
    expect(messages({ pageSize: '101' })).toEqual(['pageSize must be between 1 and 100']);
    expect(messages({ sort: 'name' })).toEqual([
      'sort must be one of: age, patient, section, site',
    ]);
    expect(messages({ cursor: '' })).toEqual(['cursor: leave it out for the first page']);
  });

  it('refuses a page number, which the list no longer takes, naming it', () => {
    const result = disputeQuerySchema.safeParse({ page: '2' });
    expect(result.success).toBe(false);
    expect(result.error?.issues[0]?.message).toMatch(/^page: not a parameter of the Disputes list/);
  });
});
