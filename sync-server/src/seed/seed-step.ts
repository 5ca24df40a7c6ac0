import type { EntityManager } from '@mikro-orm/postgresql';
import type { Type } from '@nestjs/common';

/** One idempotent step of the demo seed; returns lines to print at start-up (sign-ins, codes). */
export interface SeedStep {
  readonly name: string;
  run(em: EntityManager): Promise<string[]>;
}

export type SeedStepClass = Type<SeedStep>;
