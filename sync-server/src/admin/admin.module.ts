import { Module } from '@nestjs/common';
import { SitesModule } from '../sites/sites.module';
import { AdminSitesController } from './admin-sites.controller';
import { AdminSitesService } from './admin-sites.service';

/** The admin desk's site management (people and the Fleet live in their own modules). */
@Module({
  imports: [SitesModule],
  controllers: [AdminSitesController],
  providers: [AdminSitesService],
})
export class AdminModule {}
