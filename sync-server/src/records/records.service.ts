// Read access to synced records for other modules (letters, reports): the current state of one
// record, scoped like a pull. Writes go through the sync and conflicts modules only.
import { EntityManager } from '@mikro-orm/postgresql';
import { Inject, Injectable } from '@nestjs/common';
import type { AuthUser } from '../auth/auth-user';
import { hasSiteAccess } from '../auth/scope';
import { sqlRows } from './sql';
import { recordFromRow, type StoredRecord, type StoredRecordRow } from './stored-record';

@Injectable()
export class RecordsService {
  constructor(@Inject(EntityManager) private readonly em: EntityManager) {}

  /** The record, or null when it does not exist or lies outside the user's sites. */
  async findVisible(user: AuthUser, recordId: string): Promise<StoredRecord | null> {
    const [row] = await sqlRows<StoredRecordRow>(
      this.em.fork(),
      `select "id", "collection", "site_id", "version"::text as "version", "deleted", "fields", "stamps", "created_at"
         from "sync_record" where "id" = ?::uuid`,
      [recordId],
    );
    if (!row) return null;
    const record = recordFromRow(row);
    return hasSiteAccess(user, record.siteId) ? record : null;
  }
}
