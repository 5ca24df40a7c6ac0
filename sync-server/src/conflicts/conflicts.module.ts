import { Module } from '@nestjs/common';
import { RecordsModule } from '../records/records.module';
import { AddendumModule } from '../review/addendum.module';
import { ConflictsController } from './conflicts.controller';
import { ConflictsService } from './conflicts.service';

@Module({
  imports: [RecordsModule, AddendumModule],
  controllers: [ConflictsController],
  providers: [ConflictsService],
})
export class ConflictsModule {}
