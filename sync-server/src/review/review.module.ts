import { Module } from '@nestjs/common';
import { CountersignService } from './countersign.service';
import { DisputeDeskService } from './dispute-desk.service';
import { RecordHistoryService } from './record-history.service';
import { ReviewController } from './review.controller';

/**
 * The supervisor's Review desk: Disputes enriched for the desk, countersigning and returns, and
 * record histories. Its migration adds the field-value history and the Addendum trigger on the
 * sync storage (migrations/Migration20261201040000ReviewDesk.ts).
 */
@Module({
  controllers: [ReviewController],
  providers: [CountersignService, DisputeDeskService, RecordHistoryService],
})
export class ReviewModule {}
