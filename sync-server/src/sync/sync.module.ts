import { Module } from '@nestjs/common';
import { RecordsModule } from '../records/records.module';
import { HorizonService } from './horizon.service';
import { SyncController } from './sync.controller';
import { SyncService } from './sync.service';

@Module({
  imports: [RecordsModule],
  controllers: [SyncController],
  providers: [SyncService, HorizonService],
  exports: [SyncService, HorizonService],
})
export class SyncModule {}
