import { Entity, PrimaryKey, Property } from '@mikro-orm/core';

/** A refresh token, stored as its SHA-256 only. A spent token presented again revokes its family. */
@Entity({ tableName: 'refresh_token' })
export class RefreshToken {
  @PrimaryKey({ type: 'uuid' })
  id!: string;

  @Property({ type: 'uuid' })
  sessionId!: string;

  @Property({ type: 'text', hidden: true })
  tokenHash!: string;

  @Property({ type: 'timestamptz' })
  createdAt!: Date;

  @Property({ type: 'timestamptz', nullable: true })
  spentAt: Date | null = null;
}
