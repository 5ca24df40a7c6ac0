// Who may write SQL on which tables: the records module owns the sync tables, the disputes module
// its disputes and Addenda. Every source file (tests, test factories, benchmarks and migrations
// aside) is read, and a file outside those modules that names one of their tables as a quoted SQL
// identifier fails, as does the disputes module writing a record or the records module writing
// an Addendum.
import { readdirSync, readFileSync } from 'node:fs';
import { join, relative, sep } from 'node:path';
import { describe, expect, it } from 'vitest';

const SRC = join(__dirname, '..');

/** Tables only records/ touches (disputes/ may read "sync_record" and the field history in joins). */
const RECORD_TABLES = [
  'sync_record',
  'sync_change',
  'sync_horizon',
  'sync_timeline',
  'sync_version_offset',
  'review_superseded',
  'review_field_value',
];
/** Tables of the disputes module (records/ opens disputes and adds candidates during a push). */
const DISPUTE_TABLES = ['sync_conflict', 'review_addendum'];

function sourceFiles(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((entry) => {
    const path = join(dir, entry.name);
    if (entry.isDirectory()) return sourceFiles(path);
    return entry.name.endsWith('.ts') && !entry.name.endsWith('.spec.ts') ? [path] : [];
  });
}

const EXEMPT = ['migrations', 'testing', join('sync', 'bench')];

function files(): { path: string; module: string; text: string }[] {
  return sourceFiles(SRC)
    .map((path) => relative(SRC, path))
    .filter((path) => !EXEMPT.some((dir) => path.startsWith(dir + sep)))
    .map((path) => ({
      path,
      module: path.split(sep)[0] ?? '',
      text: readFileSync(join(SRC, path), 'utf8'),
    }));
}

const named = (text: string, tables: readonly string[]) =>
  tables.filter((table) => text.includes(`"${table}"`));

const written = (text: string, table: string) =>
  new RegExp(`(insert\\s+into|update|delete\\s+from)\\s+"${table}"`, 'i').test(text);

describe('table ownership', () => {
  it('finds the source files it checks', () => {
    const all = files();
    expect(all.some((f) => f.path === join('records', 'record-store.ts'))).toBe(true);
    expect(all.some((f) => f.path === join('disputes', 'dispute-store.ts'))).toBe(true);
    expect(all.length).toBeGreaterThan(50);
  });

  it('leaves the sync tables to records/ and the disputes tables to records/ and disputes/', () => {
    const trespass = files().flatMap((f) => {
      const tables =
        f.module === 'records' || f.module === 'disputes'
          ? []
          : [...named(f.text, RECORD_TABLES), ...named(f.text, DISPUTE_TABLES)];
      return tables.map((table) => `${f.path} names "${table}"`);
    });
    expect(trespass).toEqual([]);
  });

  it('lets disputes/ only read records, and records/ never write Addenda', () => {
    const trespass = files().flatMap((f) => {
      if (f.module === 'disputes') {
        return RECORD_TABLES.filter((table) => written(f.text, table)).map(
          (table) => `${f.path} writes "${table}"`,
        );
      }
      if (f.module === 'records') {
        return written(f.text, 'review_addendum') ? [`${f.path} writes "review_addendum"`] : [];
      }
      return [];
    });
    expect(trespass).toEqual([]);
  });
});
