import type { EntityManager } from '@mikro-orm/postgresql';
import { Site } from '../sites/site.entity';
import { DEMO_SITES } from './demo-scenario';
import type { SeedStep } from './seed-step';

export class SitesSeed implements SeedStep {
  readonly name = 'sites';

  async run(em: EntityManager): Promise<string[]> {
    for (const site of Object.values(DEMO_SITES)) {
      const existing = await em.findOne(Site, { id: site.id });
      if (!existing) em.create(Site, { ...site, createdAt: new Date() });
    }
    await em.flush();
    return [];
  }
}
