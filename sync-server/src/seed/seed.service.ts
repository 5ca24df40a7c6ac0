import { EntityManager } from '@mikro-orm/postgresql';
import { Inject, Injectable } from '@nestjs/common';
import { ModuleRef } from '@nestjs/core';
import { seedSteps } from './seed-steps';

@Injectable()
export class SeedService {
  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(ModuleRef) private readonly moduleRef: ModuleRef,
  ) {}

  /** Runs every step of the demo seed; returns the lines the steps want printed. */
  async run(): Promise<string[]> {
    const lines: string[] = [];
    for (const stepClass of seedSteps) {
      const step = await this.moduleRef.create(stepClass);
      lines.push(...(await step.run(this.em.fork())));
    }
    return lines;
  }
}
