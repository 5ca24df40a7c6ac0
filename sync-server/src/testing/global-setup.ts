// Migrates one template database per test run; each test file then clones it (fast) so files
// never share rows. FUSELIGHT_TEST_PG_URL is set by `npm test` (scripts/test.mjs), which
// starts a private PostgreSQL cluster; run `node scripts/test-db.mjs` to get one by hand.
import pg from 'pg';
import type { TestProject } from 'vitest/node';
import { migrateDatabase } from '../database/migrate';

declare module 'vitest' {
  export interface ProvidedContext {
    templateDatabase: string;
    adminDatabaseUrl: string;
  }
}

export function adminUrl(): string {
  const url = process.env.FUSELIGHT_TEST_PG_URL;
  if (!url) {
    throw new Error(
      'FUSELIGHT_TEST_PG_URL is not set: run the tests with `npm test` from the repository root, or start a test cluster with `node scripts/test-db.mjs` and export the URL it prints.',
    );
  }
  return url;
}

export function databaseUrl(admin: string, name: string): string {
  const url = new URL(admin);
  url.pathname = `/${name}`;
  return url.toString();
}

export default async function setup(project: TestProject): Promise<() => Promise<void>> {
  const admin = adminUrl();
  const template = `tpl_${process.pid}_${Date.now()}`;
  const client = new pg.Client({ connectionString: admin });
  await client.connect();
  await client.query(`create database "${template}"`);
  await client.end();
  await migrateDatabase(databaseUrl(admin, template));
  project.provide('templateDatabase', template);
  project.provide('adminDatabaseUrl', admin);
  return async () => {
    const c = new pg.Client({ connectionString: admin });
    await c.connect();
    await c.query(`drop database if exists "${template}" with (force)`);
    await c.end();
  };
}
