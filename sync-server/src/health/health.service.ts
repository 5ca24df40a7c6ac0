import { EntityManager } from '@mikro-orm/postgresql';
import { Inject, Injectable, ServiceUnavailableException } from '@nestjs/common';
import { SCHEMA_VERSION } from '@fuselight/shared';
import serverPackage from '../../package.json';

export interface HealthReport {
  status: 'ok';
  db: 'ok';
  version: string;
  schemaVersion: number;
}

@Injectable()
export class HealthService {
  constructor(@Inject(EntityManager) private readonly em: EntityManager) {}

  async check(): Promise<HealthReport> {
    try {
      await this.em.fork().getConnection().execute('select 1');
    } catch {
      throw new ServiceUnavailableException({
        message: 'The database is not answering.',
        status: 'error',
        db: 'error',
      });
    }
    return {
      status: 'ok',
      db: 'ok',
      version: serverPackage.version,
      schemaVersion: SCHEMA_VERSION,
    };
  }
}
