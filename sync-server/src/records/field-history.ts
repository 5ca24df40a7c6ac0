// Every value each field of a record has held ("review_field_value": the superseded values kept
// by the history triggers beside the current ones in "sync_record", see the migration
// SupersededHistory), for the Review desk's record history.
import type { EntityManager } from '@mikro-orm/postgresql';
import { Injectable } from '@nestjs/common';
import type { JsonValue } from '@fuselight/shared';
import { sqlRows } from '../database/sql';

export interface FieldValueRow {
  field: string;
  value: JsonValue | null;
  hlc: string;
  version: string;
  by_user: string;
  device: string;
  at: Date | string;
}

@Injectable()
export class FieldHistory {
  /** Every value of every field of the record, in version order. */
  valuesOf(em: EntityManager, recordId: string): Promise<FieldValueRow[]> {
    return sqlRows<FieldValueRow>(
      em,
      `select h."field", h."value", h."hlc", h."version"::text as "version", h."by_user", h."device", h."at"
         from "review_field_value" h where h."record_id" = ? order by h."version", h."field"`,
      [recordId],
    );
  }
}
