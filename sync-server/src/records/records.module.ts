import { Module } from '@nestjs/common';
import { RecordStore } from './record-store';
import { RecordsService } from './records.service';
import { FieldHistory } from './field-history';
import { ServerWriter } from './server-writer';
import { VisitRecords } from './visit-records';

/**
 * Storage of synced records, their conflicts and versions: the only module whose SQL touches
 * "sync_record" and "sync_conflict". Other modules read records through RecordsService or the
 * RecordStore, and the server writes its own field changes through the ServerWriter.
 */
@Module({
  providers: [FieldHistory, RecordsService, RecordStore, ServerWriter, VisitRecords],
  exports: [FieldHistory, RecordsService, RecordStore, ServerWriter, VisitRecords],
})
export class RecordsModule {}
