import { Module } from '@nestjs/common';
import { DisputesModule } from '../disputes/disputes.module';
import { RecordsModule } from '../records/records.module';
import { CountersignService } from './countersign.service';
import { RecordHistoryService } from './record-history.service';
import { ReviewController } from './review.controller';

/**
 * The supervisor's Review desk beyond Disputes (which the disputes module owns): countersigning
 * and returns, and record histories. Its migrations add the field-value history on the sync
 * storage (Migration20261201040000ReviewDesk, Migration20261202000000SupersededHistory) and the
 * Addenda table the disputes module writes.
 */
@Module({
  imports: [DisputesModule, RecordsModule],
  controllers: [ReviewController],
  providers: [CountersignService, RecordHistoryService],
})
export class ReviewModule {}
