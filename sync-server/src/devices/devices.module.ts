import { MikroOrmModule } from '@mikro-orm/nestjs';
import { Module } from '@nestjs/common';
import { SettingsModule } from '../settings/settings.module';
import { AdminDevicesController } from './admin-devices.controller';
import { DeviceSite } from './device-site.entity';
import { Device } from './device.entity';
import { DevicesController } from './devices.controller';
import { DevicesService } from './devices.service';

@Module({
  imports: [MikroOrmModule.forFeature([Device, DeviceSite]), SettingsModule],
  controllers: [DevicesController, AdminDevicesController],
  providers: [DevicesService],
  exports: [DevicesService],
})
export class DevicesModule {}
