import type { EntityManager } from '@mikro-orm/postgresql';
import { Inject } from '@nestjs/common';
import { ModuleRef } from '@nestjs/core';
import { User } from '../users/user.entity';
import { UsersService } from '../users/users.service';
import { DEMO_PASSWORD, DEMO_PEOPLE } from './demo-scenario';
import type { SeedStep } from './seed-step';

/** One demo account per role (and a student). Existing accounts are left as they are. */
export class PeopleSeed implements SeedStep {
  readonly name = 'people';

  constructor(@Inject(ModuleRef) private readonly moduleRef: ModuleRef) {}

  async run(em: EntityManager): Promise<string[]> {
    const users = this.moduleRef.get(UsersService, { strict: false });
    const lines = ['Demo sign-ins (password for all: ' + DEMO_PASSWORD + '):'];
    for (const person of Object.values(DEMO_PEOPLE)) {
      if (!(await em.findOne(User, { id: person.id }))) {
        await users.create(null, { ...person, password: DEMO_PASSWORD });
      }
      const note = person.needsCountersign ? ', visits need a countersignature' : '';
      lines.push(`  ${person.email.padEnd(32)} ${person.role} — ${person.name}${note}`);
    }
    return lines;
  }
}
