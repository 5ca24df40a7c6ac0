// @vitest-environment node
// The import and syntax bans of the repository's eslint.config.js, proved on snippets linted at
// paths inside each workspace (nothing is written to disk). It lives here because the PWA runs
// vitest without a database. Type information is switched off and only the ban rules run: the
// bans need no types, and the project service would refuse files that are not on disk.
import { fileURLToPath } from 'node:url';
import { ESLint } from 'eslint';
import { beforeAll, describe, expect, it } from 'vitest';

const repoRoot = fileURLToPath(new URL('../../', import.meta.url));
const BAN_RULES = new Set(['no-restricted-imports', 'no-restricted-syntax']);

const CROSS_WORKSPACE = 'Import another workspace by its package name, not a relative path.';
const SHARED_IS_PURE = 'shared/ is pure: no I/O, no framework.';
const NO_DEXIE_IN_COMPONENTS = 'Components use repositories in pwa/src/data, never Dexie.';

let eslint: ESLint;

beforeAll(() => {
  eslint = new ESLint({
    cwd: repoRoot,
    overrideConfig: { languageOptions: { parserOptions: { projectService: false } } },
    ruleFilter: ({ ruleId }) => BAN_RULES.has(ruleId),
  });
});

/** The ban messages ESLint gives `code` as if it were the file at `filePath`. */
async function bans(filePath: string, code: string): Promise<string[]> {
  const [result] = await eslint.lintText(code, { filePath });
  if (!result) throw new Error(`ESLint gave no result for ${filePath}`);
  const other = result.messages.filter((m) => !m.ruleId || !BAN_RULES.has(m.ruleId));
  expect(
    other.map((m) => m.message),
    `${filePath}: other messages`,
  ).toEqual([]);
  return result.messages.map((m) => m.message);
}

/** ESLint's words for an import banned by name (`paths`), with the config's message if any. */
const byName = (source: string, message?: string) =>
  `'${source}' import is restricted from being used.${message === undefined ? '' : ` ${message}`}`;
/** ESLint's words for an import banned by a pattern, with the config's message. */
const byPattern = (source: string, message: string) =>
  `'${source}' import is restricted from being used by a pattern. ${message}`;

describe('the lint bans of eslint.config.js', () => {
  it.each([
    // where the snippet sits, the snippet, the messages expected (in order)
    [
      'shared/src/clinical/lint-probe.ts',
      "export { db } from '../../../pwa/src/data/db';",
      [byPattern('../../../pwa/src/data/db', CROSS_WORKSPACE)],
    ],
    [
      'shared/src/lint-probe.ts',
      "export { tick } from '../../sync-server/src/common/clock';",
      [byPattern('../../sync-server/src/common/clock', CROSS_WORKSPACE)],
    ],
    [
      'shared/src/clinical/lint-probe.ts',
      "import Dexie from 'dexie';\nexport { Dexie };",
      [byName('dexie'), byPattern('dexie', SHARED_IS_PURE)],
    ],
    [
      'shared/src/clinical/lint-probe.ts',
      "export { readFileSync } from 'node:fs';",
      [byName('node:fs')],
    ],
    ['shared/src/clinical/lint-probe.ts', "export { createServer } from 'http';", [byName('http')]],
    [
      'shared/src/sync/lint-probe.ts',
      "export { Module } from '@nestjs/common';",
      [byName('@nestjs/common'), byPattern('@nestjs/common', SHARED_IS_PURE)],
    ],
    [
      'shared/src/sync/lint-probe.ts',
      "export { MikroORM } from '@mikro-orm/core';",
      [byPattern('@mikro-orm/core', SHARED_IS_PURE)],
    ],
    [
      'shared/src/sync/lint-probe.ts',
      'export const now = Date.now();',
      ['shared/ takes time as a parameter; no Date.now().'],
    ],
    [
      'shared/src/sync/lint-probe.ts',
      "export const page = fetch('/api');",
      ['shared/ does no I/O.'],
    ],
    [
      'pwa/src/components/controls/LintProbe.tsx',
      "import Dexie from 'dexie';\nexport { Dexie };",
      [byName('dexie', NO_DEXIE_IN_COMPONENTS)],
    ],
    [
      'pwa/src/components/controls/LintProbe.tsx',
      "export { SCHEMA_VERSION } from '../../../../shared/src/schemas/registry';",
      [byPattern('../../../../shared/src/schemas/registry', CROSS_WORKSPACE)],
    ],
    [
      'pwa/src/screens/today/LintProbe.tsx',
      "import Dexie from 'dexie';\nexport { Dexie };",
      [byName('dexie', NO_DEXIE_IN_COMPONENTS)],
    ],
    [
      'pwa/src/screens/today/lint-probe.ts',
      "export { SCHEMA_VERSION } from '../../../../shared/src/schemas/registry';",
      [byPattern('../../../../shared/src/schemas/registry', CROSS_WORKSPACE)],
    ],
    [
      'pwa/src/app/LintProbe.tsx',
      "import Dexie from 'dexie';\nexport { Dexie };",
      [byName('dexie', NO_DEXIE_IN_COMPONENTS)],
    ],
    [
      'pwa/src/data/lint-probe.ts',
      "export { SCHEMA_VERSION } from '../../../shared/src/schemas/registry';",
      [byPattern('../../../shared/src/schemas/registry', CROSS_WORKSPACE)],
    ],
    [
      'sync-server/src/sync/lint-probe.ts',
      "export { SCHEMA_VERSION } from '../../../shared/src/schemas/registry';",
      [byPattern('../../../shared/src/schemas/registry', CROSS_WORKSPACE)],
    ],
    [
      'conflict-tests/src/harness/lint-probe.ts',
      "export { FuselightDb } from '../../../pwa/src/data/db';",
      [byPattern('../../../pwa/src/data/db', CROSS_WORKSPACE)],
    ],
  ])('%s: `%s` is banned', async (filePath, code, expected) => {
    expect(await bans(filePath, code)).toEqual(expected);
  });

  it.each([
    // where the snippet sits, an import the bans allow
    ['shared/src/clinical/lint-probe.ts', "export { CLINICAL_CAUTION } from './caution';"],
    ['shared/src/clinical/lint-probe.ts', "export { z } from 'zod';"],
    ['pwa/src/data/lint-probe.ts', "import Dexie from 'dexie';\nexport { Dexie };"],
    ['pwa/src/components/LintProbe.tsx', "export { SCHEMA_VERSION } from '@fuselight/shared';"],
    // Three levels up inside the PWA is its own workspace, not another one.
    [
      'pwa/src/screens/bench/steps/LintProbe.tsx',
      "export { AngleControl } from '../../../components/controls';",
    ],
  ])('%s: `%s` is allowed', async (filePath, code) => {
    expect(await bans(filePath, code)).toEqual([]);
  });
});
