import { MikroOrmModule } from '@mikro-orm/nestjs';
import { Module, type DynamicModule } from '@nestjs/common';
import { APP_FILTER, APP_GUARD, APP_PIPE } from '@nestjs/core';
import { AdminModule } from './admin/admin.module';
import { AttachmentsModule } from './attachments/attachments.module';
import { AuditModule } from './audit/audit.module';
import { AuthCoreModule } from './auth/auth-core.module';
import { AuthModule } from './auth/auth.module';
import { JwtAuthGuard } from './auth/jwt-auth.guard';
import { CoreModule, type CoreOverrides } from './common/core.module';
import { AllExceptionsFilter } from './common/http-exception.filter';
import { ZodValidationPipe } from './common/zod-validation.pipe';
import type { AppConfig } from './config/app-config';
import { ormOptions } from './database/orm-options';
import { DevicesModule } from './devices/devices.module';
import { DisputesModule } from './disputes/disputes.module';
import { FhirModule } from './fhir/fhir.module';
import { HealthModule } from './health/health.module';
import { LettersModule } from './letters/letters.module';
import { LiveModule } from './live/live.module';
import { MailModule } from './mail/mail.module';
import { SeedModule } from './seed/seed.module';
import { SettingsModule } from './settings/settings.module';
import { SitesModule } from './sites/sites.module';
import { RecordsModule } from './records/records.module';
import { ReviewModule } from './review/review.module';
import { SyncModule } from './sync/sync.module';
import { UsersModule } from './users/users.module';

@Module({})
export class AppModule {
  static forRoot(config: AppConfig, overrides: CoreOverrides = {}): DynamicModule {
    return {
      module: AppModule,
      imports: [
        CoreModule.forRoot(config, overrides),
        MikroOrmModule.forRoot({ ...ormOptions(config.databaseUrl), autoLoadEntities: true }),
        AuthCoreModule.forRoot(config),
        AuthModule,
        HealthModule,
        SitesModule,
        SeedModule,
        // Feature modules (one per bounded context) are listed below this line.
        AuditModule,
        SettingsModule,
        UsersModule,
        DevicesModule,
        AdminModule,
        RecordsModule,
        SyncModule,
        LiveModule,
        DisputesModule,
        ReviewModule,
        LettersModule,
        MailModule,
        AttachmentsModule,
        FhirModule,
      ],
      providers: [
        { provide: APP_GUARD, useClass: JwtAuthGuard },
        { provide: APP_PIPE, useClass: ZodValidationPipe },
        { provide: APP_FILTER, useClass: AllExceptionsFilter },
      ],
    };
  }
}
