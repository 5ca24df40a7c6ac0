import { Module } from '@nestjs/common';
import { RecordsModule } from '../records/records.module';
import { AddendumPublisher } from './addendum-publisher.service';
import { AddendumStore } from './addendum-store';
import { DisputeDeskController } from './dispute-desk.controller';
import { DisputeDeskService } from './dispute-desk.service';
import { DisputeResolutionService } from './dispute-resolution.service';
import { DisputeStore } from './dispute-store';
import { DisputesController } from './disputes.controller';

/**
 * Disputes (rows of "sync_conflict", `conflicts` on the wire): the one owner of listing them
 * (GET /api/conflicts for tablets, the Review desk's list, detail and tab counts), resolving
 * them (POST /api/conflicts/:id/resolve) and the Addenda a resolution on a Signed visit records
 * ("review_addendum", written in the resolving transaction and published for tablets as synced
 * `addendum` records once it commits; a recovery sweep at start publishes any a crash left).
 * The push path opens disputes and adds candidates through the records module's RecordStore.
 * Exports its repositories for the Review desk's countersigning and record history.
 */
@Module({
  imports: [RecordsModule],
  controllers: [DisputesController, DisputeDeskController],
  providers: [
    AddendumPublisher,
    AddendumStore,
    DisputeDeskService,
    DisputeResolutionService,
    DisputeStore,
  ],
  exports: [AddendumStore, DisputeStore],
})
export class DisputesModule {}
