// The clinic an end-to-end file works in, made by the file itself in the empty migrated database
// the test runner gives it (FUSELIGHT_E2E_DATABASE_URL), with the same argon2 hashing the server
// uses; never the demo seed. Describe the site and people up front (the tests name them), then
// store them with seedClinic (or createSite / createPerson on one connection) in beforeAll.
import { randomUUID } from 'node:crypto';
import type { Role } from '@fuselight/shared';
import { hash } from '@node-rs/argon2';
import pg from 'pg';

export type { Role };

export interface Site {
  readonly id: string;
  readonly name: string;
}

export interface Person {
  readonly id: string;
  readonly name: string;
  readonly email: string;
  readonly password: string;
  readonly role: Role;
}

/** A short tag unique to one run of a file, put into names, e-mail addresses and passwords. */
export const runTag = (): string => randomUUID().slice(0, 8);

export const newSite = (name: string): Site => ({ id: randomUUID(), name });

export const newPerson = (
  name: string,
  role: Role,
  login: { email: string; password: string },
): Person => ({ id: randomUUID(), name, role, ...login });

export function databaseUrl(): string {
  const url = process.env.FUSELIGHT_E2E_DATABASE_URL;
  if (!url)
    throw new Error(
      'FUSELIGHT_E2E_DATABASE_URL is not set: run end-to-end tests through `npm test`.',
    );
  return url;
}

/** Runs `work` on its own connection to the e2e database, closed afterwards. */
export async function withDb<T>(work: (client: pg.Client) => Promise<T>): Promise<T> {
  const client = new pg.Client({ connectionString: databaseUrl() });
  await client.connect();
  try {
    return await work(client);
  } finally {
    await client.end();
  }
}

export async function createSite(client: pg.Client, site: Site): Promise<void> {
  await client.query(
    `insert into "site" ("id", "name", "kind", "time_zone") values ($1, $2, 'clinic', 'Europe/London')`,
    [site.id, site.name],
  );
}

/** Stores the person with a hashed password and gives them the sites. */
export async function createPerson(
  client: pg.Client,
  person: Person,
  sites: readonly Site[],
): Promise<void> {
  await client.query(
    `insert into "app_user" ("id", "email", "name", "role", "password_hash", "created_at", "updated_at")
     values ($1, $2, $3, $4, $5, now(), now())`,
    [person.id, person.email, person.name, person.role, await hash(person.password)],
  );
  for (const site of sites)
    await client.query(`insert into "user_site" ("user_id", "site_id") values ($1, $2)`, [
      person.id,
      site.id,
    ]);
}

/** One site and its people, every one of them given that site. */
export async function seedClinic(site: Site, people: readonly Person[]): Promise<void> {
  await withDb(async (client) => {
    await createSite(client, site);
    for (const person of people) await createPerson(client, person, [site]);
  });
}
