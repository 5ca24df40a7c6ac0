import type { KeyProtectionKind } from '@fuselight/shared';
import { Entity, PrimaryKey, Property } from '@mikro-orm/core';
import type { DeviceState } from '@fuselight/shared';

/**
 * A tablet of the Fleet. `pending` until enrolled with its code; `active` once it holds a device
 * secret; `retired` may still push (to empty its outbox) and then erases itself; `revoked` is
 * refused at once and told to erase. (The states are declared in shared/, with the admin views.)
 */
@Entity({ tableName: 'device' })
export class Device {
  @PrimaryKey({ type: 'uuid' })
  id!: string;

  @Property({ type: 'text' })
  label!: string;

  @Property({ type: 'text' })
  state: DeviceState = 'pending';

  /** SHA-256 of the single-use enrolment code; null once used. */
  @Property({ type: 'text', nullable: true, hidden: true })
  enrolmentCodeHash: string | null = null;

  @Property({ type: 'timestamptz', nullable: true })
  enrolmentExpiresAt: Date | null = null;

  /** SHA-256 of the device secret the tablet presents at sign-in. */
  @Property({ type: 'text', nullable: true, hidden: true })
  secretHash: string | null = null;

  @Property({ type: 'timestamptz', nullable: true })
  enrolledAt: Date | null = null;

  @Property({ type: 'timestamptz', nullable: true })
  lastSeenAt: Date | null = null;

  @Property({ type: 'text', nullable: true })
  appVersion: string | null = null;

  @Property({ type: 'integer', nullable: true })
  outboxSize: number | null = null;

  /** How the tablet's data key is protected, as its last heartbeat said; null until it does. */
  @Property({ type: 'text', nullable: true })
  keyProtection: KeyProtectionKind | null = null;

  @Property({ type: 'uuid', nullable: true })
  createdBy: string | null = null;

  @Property({ type: 'timestamptz' })
  createdAt!: Date;

  @Property({ type: 'timestamptz', nullable: true })
  retiredAt: Date | null = null;

  @Property({ type: 'timestamptz', nullable: true })
  revokedAt: Date | null = null;
}
