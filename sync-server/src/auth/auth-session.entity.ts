import { Entity, PrimaryKey, Property } from '@mikro-orm/core';

/**
 * One sign-in: the family of rotating refresh tokens. Its id is the `sessionId` claim of every
 * access token it issues, so revoking it (logout, reuse of a spent refresh token, deactivation,
 * a tablet's revocation) ends them all on their next request.
 */
@Entity({ tableName: 'auth_session' })
export class AuthSession {
  @PrimaryKey({ type: 'uuid' })
  id!: string;

  @Property({ type: 'uuid' })
  userId!: string;

  @Property({ type: 'uuid', nullable: true })
  deviceId: string | null = null;

  @Property({ type: 'timestamptz' })
  createdAt!: Date;

  @Property({ type: 'timestamptz' })
  lastRefreshedAt!: Date;

  /** Absolute end of the family: refreshing never extends it past this. */
  @Property({ type: 'timestamptz' })
  expiresAt!: Date;

  @Property({ type: 'timestamptz', nullable: true })
  revokedAt: Date | null = null;

  @Property({ type: 'text', nullable: true })
  revokedReason: string | null = null;
}
