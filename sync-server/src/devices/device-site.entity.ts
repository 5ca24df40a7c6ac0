import { Entity, PrimaryKey, PrimaryKeyProp } from '@mikro-orm/core';

/** A site a tablet serves; a session on the tablet holds only these of the person's sites. */
@Entity({ tableName: 'device_site' })
export class DeviceSite {
  [PrimaryKeyProp]?: ['deviceId', 'siteId'];

  @PrimaryKey({ type: 'uuid' })
  deviceId!: string;

  @PrimaryKey({ type: 'uuid' })
  siteId!: string;
}
