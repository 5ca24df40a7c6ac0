// Sites as admins manage them: clinics and outreach locations. (Deleting a site is not offered:
// records, people and tablets refer to it.)
import { EntityManager } from '@mikro-orm/postgresql';
import { Inject, Injectable, NotFoundException } from '@nestjs/common';
import type { z } from 'zod';
import { AuditService } from '../audit/audit.service';
import type { AuthUser } from '../auth/auth-user';
import { CLOCK, IDS, type Clock, type IdGenerator } from '../common/clock.provider';
import { Site, type SiteKind } from '../sites/site.entity';
import type { createSiteSchema, updateSiteSchema } from './admin-sites.schemas';

export interface SiteView {
  id: string;
  name: string;
  kind: SiteKind;
  address: string | null;
  timeZone: string;
  createdAt: string;
}

@Injectable()
export class AdminSitesService {
  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(CLOCK) private readonly clock: Clock,
    @Inject(IDS) private readonly ids: IdGenerator,
    @Inject(AuditService) private readonly audit: AuditService,
  ) {}

  async list(): Promise<SiteView[]> {
    const sites = await this.em.fork().find(Site, {}, { orderBy: { name: 'asc', id: 'asc' } });
    return sites.map(view);
  }

  async create(
    admin: Pick<AuthUser, 'userId'> | null,
    input: z.infer<typeof createSiteSchema>,
  ): Promise<SiteView> {
    return this.em.fork().transactional(async (em) => {
      const site = em.create(Site, {
        id: this.ids.uuid(),
        name: input.name,
        kind: input.kind,
        address: input.address ?? null,
        timeZone: input.timeZone ?? 'Europe/London',
        createdAt: this.clock.now(),
      });
      em.persist(site);
      await em.flush();
      await this.audit.record(em, {
        kind: 'site.created',
        actorId: admin?.userId ?? null,
        siteId: site.id,
        subjectType: 'site',
        subjectId: site.id,
        detail: { name: site.name, kind: site.kind },
      });
      return view(site);
    });
  }

  async update(
    admin: Pick<AuthUser, 'userId'> | null,
    siteId: string,
    patch: z.infer<typeof updateSiteSchema>,
  ): Promise<SiteView> {
    return this.em.fork().transactional(async (em) => {
      const site = await em.findOne(Site, { id: siteId });
      if (!site) throw new NotFoundException(`No site has the id ${siteId}.`);
      if (patch.name !== undefined) site.name = patch.name;
      if (patch.kind !== undefined) site.kind = patch.kind;
      if (patch.address !== undefined) site.address = patch.address;
      if (patch.timeZone !== undefined) site.timeZone = patch.timeZone;
      await em.flush();
      await this.audit.record(em, {
        kind: 'site.updated',
        actorId: admin?.userId ?? null,
        siteId: site.id,
        subjectType: 'site',
        subjectId: site.id,
        detail: { fields: Object.keys(patch) },
      });
      return view(site);
    });
  }
}

function view(site: Site): SiteView {
  return {
    id: site.id,
    name: site.name,
    kind: site.kind,
    address: site.address,
    timeZone: site.timeZone,
    createdAt: site.createdAt.toISOString(),
  };
}
