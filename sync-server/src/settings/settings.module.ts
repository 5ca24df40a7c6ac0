import { Module } from '@nestjs/common';
import { AdminSettingsController } from './admin-settings.controller';
import { ClinicSettingsService } from './clinic-settings.service';

/** The clinic's settings: admins change them, tablets follow them (through the devices module). */
@Module({
  controllers: [AdminSettingsController],
  providers: [ClinicSettingsService],
  exports: [ClinicSettingsService],
})
export class SettingsModule {}
