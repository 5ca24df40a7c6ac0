import { Module } from '@nestjs/common';
import { APP_CONFIG, type AppConfig } from '../config/app-config';
import { LettersModule } from '../letters/letters.module';
import { RecordsModule } from '../records/records.module';
import { MailService } from './mail.service';
import { MAIL_TRANSPORT, smtpTransport } from './mail-transport';
import { MailWorker } from './mail-worker.service';

/** E-mail of final letters: the PostgreSQL outbox, its worker, and the SMTP transport. */
@Module({
  imports: [LettersModule, RecordsModule],
  providers: [
    {
      provide: MAIL_TRANSPORT,
      inject: [APP_CONFIG],
      useFactory: (config: AppConfig) => smtpTransport(config),
    },
    MailService,
    MailWorker,
  ],
  exports: [MailService],
})
export class MailModule {}
