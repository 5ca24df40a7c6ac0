import { Entity, PrimaryKey, Property } from '@mikro-orm/core';
import type { Role } from '@fuselight/shared';

/** A person who signs in: a clinician, a supervisor or an admin. Table `app_user` ("user" is reserved). */
@Entity({ tableName: 'app_user' })
export class User {
  @PrimaryKey({ type: 'uuid' })
  id!: string;

  /** Stored in lower case; unique. */
  @Property({ type: 'text' })
  email!: string;

  @Property({ type: 'text' })
  name!: string;

  @Property({ type: 'text' })
  role!: Role;

  /** Students and new staff: their signed visits wait for a supervisor's countersignature. */
  @Property({ type: 'boolean' })
  needsCountersign: boolean = false;

  /** argon2id; never leaves the server. */
  @Property({ type: 'text', hidden: true })
  passwordHash!: string;

  /** Set for an invited person until they choose their own password. */
  @Property({ type: 'boolean' })
  mustChangePassword: boolean = false;

  @Property({ type: 'boolean' })
  active: boolean = true;

  @Property({ type: 'timestamptz' })
  createdAt!: Date;

  @Property({ type: 'timestamptz' })
  updatedAt!: Date;

  @Property({ type: 'timestamptz', nullable: true })
  lastSignInAt: Date | null = null;

  @Property({ type: 'timestamptz', nullable: true })
  deactivatedAt: Date | null = null;
}
