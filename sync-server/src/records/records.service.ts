// Read access to synced records for other modules (letters, reports): the current state of one
// record, scoped like a pull. The server's own writes go through ServerWriter.
import { EntityManager } from '@mikro-orm/postgresql';
import { Inject, Injectable } from '@nestjs/common';
import type { AuthUser } from '../auth/auth-user';
import { hasSiteAccess } from '../auth/scope';
import { RecordStore } from './record-store';
import type { StoredRecord } from './stored-record';

@Injectable()
export class RecordsService {
  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(RecordStore) private readonly store: RecordStore,
  ) {}

  /** The record, or null when it does not exist or lies outside the user's sites. */
  async findVisible(user: AuthUser, recordId: string): Promise<StoredRecord | null> {
    const record = await this.store.byId(this.em.fork(), recordId);
    return record && hasSiteAccess(user, record.siteId) ? record : null;
  }
}
