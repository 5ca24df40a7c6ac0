import { Module } from '@nestjs/common';
import { RecordsModule } from '../records/records.module';
import { AddendumModule } from './addendum.module';
import { CountersignService } from './countersign.service';
import { DisputeDeskService } from './dispute-desk.service';
import { RecordHistoryService } from './record-history.service';
import { ReviewController } from './review.controller';

/**
 * The supervisor's Review desk: Disputes enriched for the desk, countersigning and returns, and
 * record histories. Its migrations add the field-value history and the Addendum trigger on the
 * sync storage (Migration20261201040000ReviewDesk), and the link from each trigger-written
 * Addendum to the synced `addendum` record the AddendumPublisher writes for tablets
 * (Migration20261201060000AddendumRecords), published by the resolve route once its transaction
 * commits (AddendumModule).
 */
@Module({
  imports: [AddendumModule, RecordsModule],
  controllers: [ReviewController],
  providers: [CountersignService, DisputeDeskService, RecordHistoryService],
})
export class ReviewModule {}
