import { Module } from '@nestjs/common';
import { RecordsModule } from '../records/records.module';
import { LetterSourceService } from './letter-source.service';
import { LettersController } from './letters.controller';
import { LettersService } from './letters.service';
import { RecordAccess } from './record-access';

/** Letters: server rendering of the shared layout, and record access for mail and attachments. */
@Module({
  imports: [RecordsModule],
  controllers: [LettersController],
  providers: [RecordAccess, LetterSourceService, LettersService],
  exports: [RecordAccess, LetterSourceService],
})
export class LettersModule {}
