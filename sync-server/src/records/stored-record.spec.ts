// The record select list is written twice (plain and qualified by `r`) so the ORDER BY scan can
// read both; they must name the same columns in the same order.
import { describe, expect, it } from 'vitest';
import { RECORD_COLUMNS, RECORD_COLUMNS_R } from './stored-record';

describe('record column lists', () => {
  it('qualify the same columns, in the same order, with the alias r', () => {
    const qualified = RECORD_COLUMNS.split(', ').map((column) => `r.${column}`);
    expect(RECORD_COLUMNS_R.split(', ')).toEqual(qualified);
    expect(qualified).toContain('r."version"::text as "version"');
  });
});
