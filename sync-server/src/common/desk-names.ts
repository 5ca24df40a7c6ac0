// Names of the people, tablets and sites the desks show beside synced records and disputes (so a
// row reads "Ada Quill on Room 2 tablet"), and the formatting the desks share.
import type { EntityManager } from '@mikro-orm/postgresql';
import type { DeviceRef, JsonValue, PersonRef } from '@fuselight/shared';
import { jsonParam, sqlRows } from '../database/sql';
import { SERVER_DEVICE } from '../records/stored-record';

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

export interface SiteRow {
  id: string;
  name: string;
  time_zone: string;
}

export async function sitesByIds(
  em: EntityManager,
  ids: readonly string[],
): Promise<Map<string, SiteRow>> {
  const found = new Map<string, SiteRow>();
  const wanted = [...new Set(ids.filter((id) => UUID.test(id)))];
  if (wanted.length === 0) return found;
  const rows = await sqlRows<SiteRow>(
    em,
    `select "id", "name", "time_zone" from "site" where "id" in (select jsonb_array_elements_text(?::jsonb)::uuid)`,
    [jsonParam(wanted)],
  );
  for (const row of rows) found.set(row.id, row);
  return found;
}

/** Names of people and labels of tablets, so a row reads "Ada Quill on Room 2 tablet". */
export class NameBook {
  private constructor(
    private readonly people: Map<string, string>,
    private readonly devices: Map<string, string>,
  ) {}

  static async load(
    em: EntityManager,
    userIds: Iterable<string>,
    deviceIds: Iterable<string>,
  ): Promise<NameBook> {
    const users = [...new Set([...userIds].filter((id) => UUID.test(id)))];
    const tablets = [...new Set([...deviceIds].filter((id) => UUID.test(id)))];
    const people = new Map<string, string>();
    const devices = new Map<string, string>();
    if (users.length > 0) {
      const rows = await sqlRows<{ id: string; name: string }>(
        em,
        `select "id", "name" from "app_user" where "id" in (select jsonb_array_elements_text(?::jsonb)::uuid)`,
        [jsonParam(users)],
      );
      for (const row of rows) people.set(row.id, row.name);
    }
    if (tablets.length > 0) {
      const rows = await sqlRows<{ id: string; label: string }>(
        em,
        `select "id", "label" from "device" where "id" in (select jsonb_array_elements_text(?::jsonb)::uuid)`,
        [jsonParam(tablets)],
      );
      for (const row of rows) devices.set(row.id, row.label);
    }
    return new NameBook(people, devices);
  }

  person(id: string): PersonRef {
    return { id, name: this.people.get(id) ?? `Unknown person (${id.slice(0, 8)})` };
  }

  device(id: string): DeviceRef {
    if (id === SERVER_DEVICE) return { id, label: 'the Review desk (server)' };
    return { id, label: this.devices.get(id) ?? `Unknown tablet (${id.slice(0, 8)})` };
  }
}

export function isoOf(value: Date | string): string {
  return new Date(value).toISOString();
}

/** The wall time of an HLC stamp as ISO, or null when the stamp is malformed. */
export function hlcWallIso(hlc: string): string | null {
  const match = /^(\d{15})-\d{5}-/.exec(hlc);
  if (!match) return null;
  const date = new Date(Number(match[1]));
  return Number.isNaN(date.getTime()) ? null : date.toISOString();
}

/** "Mira Tenby" from a patient record's fields. */
export function patientName(fields: Record<string, JsonValue> | undefined): string | null {
  if (!fields) return null;
  const parts = [fields.givenName, fields.familyName].filter(
    (p): p is string => typeof p === 'string' && p !== '',
  );
  return parts.length > 0 ? parts.join(' ') : null;
}
