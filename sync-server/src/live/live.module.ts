import { Module } from '@nestjs/common';
import { LiveController, ReviewEventsController } from './live.controller';
import { LiveHub } from './live-hub';

/**
 * Live changes: the one listening connection per process, the open event streams, and the route
 * that opens one (docs/sync-protocol.md, "Live changes"). Reads versions and sessions through
 * records/site-versions.ts and auth/live-sessions.ts; writes nothing.
 */
@Module({
  controllers: [LiveController, ReviewEventsController],
  providers: [LiveHub],
  exports: [LiveHub],
})
export class LiveModule {}
