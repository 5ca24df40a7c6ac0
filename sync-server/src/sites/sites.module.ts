import { MikroOrmModule } from '@mikro-orm/nestjs';
import { Module } from '@nestjs/common';
import { Site } from './site.entity';

@Module({
  imports: [MikroOrmModule.forFeature([Site])],
  exports: [MikroOrmModule],
})
export class SitesModule {}
