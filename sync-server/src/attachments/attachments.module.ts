import { Module } from '@nestjs/common';
import { APP_CONFIG, type AppConfig } from '../config/app-config';
import { LettersModule } from '../letters/letters.module';
import { AttachmentStore } from './attachment-store';
import { AttachmentsController } from './attachments.controller';
import { AttachmentsService } from './attachments.service';
import { OBJECT_STORE, s3ObjectStore } from './object-store';

/** Attachment files in S3-compatible object storage, scoped by their attachment records. */
@Module({
  imports: [LettersModule],
  controllers: [AttachmentsController],
  providers: [
    {
      provide: OBJECT_STORE,
      inject: [APP_CONFIG],
      useFactory: (config: AppConfig) => s3ObjectStore(config),
    },
    AttachmentStore,
    AttachmentsService,
  ],
})
export class AttachmentsModule {}
