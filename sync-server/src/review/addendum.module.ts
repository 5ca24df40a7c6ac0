import { Module } from '@nestjs/common';
import { RecordsModule } from '../records/records.module';
import { AddendumPublisher } from './addendum-publisher.service';

/**
 * Publishing of Addenda (disputes resolved on Signed visits) as synced `addendum` records: the
 * resolve route calls it after its transaction commits (conflicts module), and the Review desk
 * runs its recovery sweep. One publisher for both, so one sweep runs per server process.
 */
@Module({
  imports: [RecordsModule],
  providers: [AddendumPublisher],
  exports: [AddendumPublisher],
})
export class AddendumModule {}
