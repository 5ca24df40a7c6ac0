// Every SQL text in the repository's TypeScript is free of an ORDER BY, GROUP BY or DISTINCT ON
// name that is also the alias of a computed output column (see sql-alias-order.ts), and the
// check finds the pattern when it is there.
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join, relative } from 'node:path';
import { fileURLToPath } from 'node:url';
import ts from 'typescript';
import { describe, expect, it } from 'vitest';
import { findAliasOrderHazards } from './sql-alias-order';

const repoRoot = fileURLToPath(new URL('../../../', import.meta.url));
const roots = ['sync-server/src', 'conflict-tests/src', 'scripts'];

function sourceFiles(dir: string): string[] {
  const out: string[] = [];
  for (const name of readdirSync(dir)) {
    if (name === 'node_modules' || name === 'dist') continue;
    const path = join(dir, name);
    if (statSync(path).isDirectory()) out.push(...sourceFiles(path));
    else if (/\.(ts|mts|mjs|js)$/.test(name) && !name.endsWith('.d.ts')) out.push(path);
  }
  return out;
}

interface Literal {
  file: string;
  line: number;
  text: string;
}

/**
 * String and template literals of a file, with `${NAME}` replaced by the text of a constant of
 * that name declared in the scanned sources (so a column list kept in a constant is seen with
 * the ORDER BY of the query it is spliced into); other substitutions become `?`.
 */
function literalsOf(files: string[]): Literal[] {
  const constants = new Map<string, ts.Expression>();
  const parsed = files.map((file) => {
    const source = ts.createSourceFile(file, readFileSync(file, 'utf8'), ts.ScriptTarget.Latest);
    const visit = (node: ts.Node) => {
      if (ts.isVariableDeclaration(node) && ts.isIdentifier(node.name) && node.initializer) {
        constants.set(node.name.text, node.initializer);
      }
      ts.forEachChild(node, visit);
    };
    visit(source);
    return source;
  });
  const textOf = (node: ts.Expression, depth = 0): string => {
    if (ts.isStringLiteral(node) || ts.isNoSubstitutionTemplateLiteral(node)) return node.text;
    if (ts.isTemplateExpression(node)) {
      let text = node.head.text;
      for (const span of node.templateSpans) {
        const constant = ts.isIdentifier(span.expression)
          ? constants.get(span.expression.text)
          : undefined;
        text += constant && depth < 4 ? textOf(constant, depth + 1) : '?';
        text += span.literal.text;
      }
      return text;
    }
    return '?';
  };
  const literals: Literal[] = [];
  parsed.forEach((source, index) => {
    const visit = (node: ts.Node) => {
      if (
        ts.isStringLiteral(node) ||
        ts.isNoSubstitutionTemplateLiteral(node) ||
        ts.isTemplateExpression(node)
      ) {
        const text = textOf(node);
        if (/\bselect\b/i.test(text)) {
          literals.push({
            file: relative(repoRoot, files[index]!),
            line: source.getLineAndCharacterOfPosition(node.getStart(source)).line + 1,
            text,
          });
        }
        return;
      }
      ts.forEachChild(node, visit);
    };
    visit(source);
  });
  return literals;
}

describe('SQL names in ORDER BY, GROUP BY and DISTINCT ON', () => {
  it('finds the pattern: a text alias of the version ordered by its bare name', () => {
    expect(
      findAliasOrderHazards(
        `select "id", "version"::text as "version" from "sync_record" where "version" > ? order by "version" limit ?`,
      ),
    ).toEqual([{ clause: 'order by', name: 'version', aliasOf: '"version"::text' }]);
    expect(
      findAliasOrderHazards(
        `select count(*)::text as "n", "record_id" from "x" group by "n", "record_id"`,
      ).map((h) => [h.clause, h.name]),
    ).toEqual([['group by', 'n']]);
    expect(
      findAliasOrderHazards(
        `select distinct on ("seq") "seq"::text as "seq", "kind" from "audit_event" order by "seq" desc`,
      ).map((h) => [h.clause, h.name]),
    ).toEqual([
      ['distinct on', 'seq'],
      ['order by', 'seq'],
    ]);
    expect(
      findAliasOrderHazards(
        `select "field", "version"::text as version from h order by version asc nulls last, "field"`,
      ).map((h) => h.name),
    ).toEqual(['version']);
  });

  it('lets qualified names, plain aliases and other orderings pass', () => {
    expect(
      findAliasOrderHazards(
        `select r."id", r."version"::text as "version" from "sync_record" r order by r."version" limit ?`,
      ),
    ).toEqual([]);
    expect(
      findAliasOrderHazards(`select u."name" as "name", u."id" from "app_user" u order by "name"`),
    ).toEqual([]);
    expect(
      findAliasOrderHazards(
        `select "seq"::text as "seq" from "audit_event" where x order by "audit_event"."seq" desc limit ?`,
      ),
    ).toEqual([]);
  });

  it('finds nothing of the kind in the repository’s SQL', () => {
    // This file's own examples above are meant to be found.
    const self = fileURLToPath(import.meta.url);
    const files = roots
      .flatMap((root) => sourceFiles(join(repoRoot, root)))
      .filter((file) => file !== self);
    const literals = literalsOf(files);
    // The scan reads the real queries (and would see the pull's if it regressed).
    expect(literals.some((l) => l.file.endsWith('records/record-store.ts'))).toBe(true);
    expect(literals.length).toBeGreaterThan(50);
    const found = literals.flatMap((literal) =>
      findAliasOrderHazards(literal.text).map(
        (h) => `${literal.file}:${literal.line} ${h.clause} "${h.name}" is also ${h.aliasOf}`,
      ),
    );
    expect(found).toEqual([]);
  });
});
