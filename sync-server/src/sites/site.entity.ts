import { Entity, PrimaryKey, Property } from '@mikro-orm/core';

export type SiteKind = 'clinic' | 'outreach';

/** A clinic location; an outreach location (a school, a rural clinic) is a site too. */
@Entity({ tableName: 'site' })
export class Site {
  @PrimaryKey({ type: 'uuid' })
  id!: string;

  @Property({ type: 'text' })
  name!: string;

  @Property({ type: 'text' })
  kind!: SiteKind;

  @Property({ type: 'text', nullable: true })
  address: string | null = null;

  /** IANA time zone used to show times to this site's people. */
  @Property({ type: 'text' })
  timeZone: string = 'Europe/London';

  @Property({ type: 'timestamptz' })
  createdAt: Date = new Date();
}
