import { Module } from '@nestjs/common';
import { RecordsService } from './records.service';

/** Storage of synced records; other modules read records through RecordsService. */
@Module({ providers: [RecordsService], exports: [RecordsService] })
export class RecordsModule {}
