import { Module } from '@nestjs/common';
import { ChangeLog } from './change-log';
import { FieldHistory } from './field-history';
import { LetterRecords } from './letter-records';
import { RecordStore } from './record-store';
import { RecordsService } from './records.service';
import { ServerWriter } from './server-writer';
import { VisitRecords } from './visit-records';

/**
 * Storage of synced records, their versions and history: the only module whose SQL touches the
 * sync tables ("sync_record", "sync_change", "sync_horizon", "sync_timeline", the version offset,
 * the field history "review_superseded"/"review_field_value"), apart from the disputes module's
 * own "sync_conflict" and "review_addendum" statements (the push opens disputes here, with the
 * records it locks). database/table-ownership.spec.ts checks it. Other modules read and write
 * through its repositories: RecordStore (push, pull, by id), ChangeLog (the push's idempotency
 * log), VisitRecords and FieldHistory (the Review desk), LetterRecords (the mail outbox),
 * RecordsService (one record, scoped to a user), and ServerWriter for the server's own writes.
 */
@Module({
  providers: [
    ChangeLog,
    FieldHistory,
    LetterRecords,
    RecordsService,
    RecordStore,
    ServerWriter,
    VisitRecords,
  ],
  exports: [
    ChangeLog,
    FieldHistory,
    LetterRecords,
    RecordsService,
    RecordStore,
    ServerWriter,
    VisitRecords,
  ],
})
export class RecordsModule {}
