import { Entity, PrimaryKey, PrimaryKeyProp } from '@mikro-orm/core';

/** A person's membership of a site; clinical access is limited to the sites a person belongs to. */
@Entity({ tableName: 'user_site' })
export class UserSite {
  [PrimaryKeyProp]?: ['userId', 'siteId'];

  @PrimaryKey({ type: 'uuid' })
  userId!: string;

  @PrimaryKey({ type: 'uuid' })
  siteId!: string;
}
