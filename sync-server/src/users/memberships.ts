// Site memberships of people and tablets, read and replaced as whole sets.
import type { EntityManager } from '@mikro-orm/postgresql';
import { BadRequestException } from '@nestjs/common';
import { DeviceSite } from '../devices/device-site.entity';
import { Site } from '../sites/site.entity';
import { UserSite } from './user-site.entity';

export async function siteIdsOfUser(em: EntityManager, userId: string): Promise<string[]> {
  const rows = await em.find(UserSite, { userId }, { orderBy: { siteId: 'asc' } });
  return rows.map((row) => row.siteId);
}

export async function siteIdsOfUsers(
  em: EntityManager,
  userIds: string[],
): Promise<Map<string, string[]>> {
  const bySite = new Map<string, string[]>(userIds.map((id) => [id, []]));
  if (userIds.length === 0) return bySite;
  const rows = await em.find(
    UserSite,
    { userId: { $in: userIds } },
    { orderBy: { siteId: 'asc' } },
  );
  for (const row of rows) bySite.get(row.userId)?.push(row.siteId);
  return bySite;
}

export async function siteIdsOfDevice(em: EntityManager, deviceId: string): Promise<string[]> {
  const rows = await em.find(DeviceSite, { deviceId }, { orderBy: { siteId: 'asc' } });
  return rows.map((row) => row.siteId);
}

export async function siteIdsOfDevices(
  em: EntityManager,
  deviceIds: string[],
): Promise<Map<string, string[]>> {
  const byDevice = new Map<string, string[]>(deviceIds.map((id) => [id, []]));
  if (deviceIds.length === 0) return byDevice;
  const rows = await em.find(
    DeviceSite,
    { deviceId: { $in: deviceIds } },
    { orderBy: { siteId: 'asc' } },
  );
  for (const row of rows) byDevice.get(row.deviceId)?.push(row.siteId);
  return byDevice;
}

/**
 * The sites whose records a tablet may hold now (docs/sync-protocol.md, Sites a tablet no longer
 * serves): the tablet's own sites that at least one active clinical person who has signed in on
 * it still belongs to. Read fresh, not from any token, so a change made a moment ago counts.
 */
export async function siteIdsDeviceMayHold(em: EntityManager, deviceId: string): Promise<string[]> {
  const rows = await em.getConnection().execute<{ site_id: string }[]>(
    `select distinct ds."site_id" from "device_site" ds
       join "user_site" us on us."site_id" = ds."site_id"
       join "app_user" u on u."id" = us."user_id"
      where ds."device_id" = ?
        and u."active"
        and u."role" in ('orthoptist', 'outreach', 'supervisor')
        and exists (select 1 from "auth_session" s
                     where s."device_id" = ds."device_id" and s."user_id" = u."id")
      order by ds."site_id"`,
    [deviceId],
  );
  return rows.map((row) => row.site_id);
}

/** 400 naming the first unknown site, so a typo is caught before anything is written. */
export async function assertSitesExist(
  em: EntityManager,
  siteIds: string[],
  field: string,
): Promise<void> {
  const found = new Set(
    (await em.find(Site, { id: { $in: siteIds } }, { fields: ['id'] })).map((site) => site.id),
  );
  const missing = siteIds.findIndex((id) => !found.has(id));
  if (missing >= 0) {
    throw new BadRequestException(`${field}.${missing}: no site has the id ${siteIds[missing]}`);
  }
}

export async function replaceUserSites(
  em: EntityManager,
  userId: string,
  siteIds: string[],
): Promise<void> {
  await em.nativeDelete(UserSite, { userId });
  for (const siteId of new Set(siteIds)) await em.insert(UserSite, { userId, siteId });
}

export async function replaceDeviceSites(
  em: EntityManager,
  deviceId: string,
  siteIds: string[],
): Promise<void> {
  await em.nativeDelete(DeviceSite, { deviceId });
  for (const siteId of new Set(siteIds)) await em.insert(DeviceSite, { deviceId, siteId });
}
