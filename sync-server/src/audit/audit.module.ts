import { MikroOrmModule } from '@mikro-orm/nestjs';
import { Global, Module } from '@nestjs/common';
import { AuditEvent } from './audit-event.entity';
import { AuditReader } from './audit-reader.service';
import { AuditController } from './audit.controller';
import { AuditService } from './audit.service';

/** Global so that any module can call AuditService.record inside its own transaction. */
@Global()
@Module({
  imports: [MikroOrmModule.forFeature([AuditEvent])],
  controllers: [AuditController],
  providers: [AuditService, AuditReader],
  exports: [AuditService],
})
export class AuditModule {}
