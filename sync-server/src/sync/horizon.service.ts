// The tombstone horizon (docs/sync-protocol.md, "Pull"): tombstones and the change-id log are kept for
// config.tombstoneHorizonDays, longer than any clinic's offline period. Pruning moves the horizon
// marker to the newest version it removed; a device whose cursor is older may have missed a
// removed tombstone, so its pull answers `{ "reset": true, "reason": "horizon" }` and it pulls
// again from 0.
import { EntityManager } from '@mikro-orm/postgresql';
import { Inject, Injectable } from '@nestjs/common';
import { CLOCK, type Clock } from '../common/clock.provider';
import { APP_CONFIG, type AppConfig } from '../config/app-config';
import { ChangeLog } from '../records/change-log';
import { RecordStore } from '../records/record-store';

export interface PruneReport {
  tombstonesRemoved: number;
  changeIdsRemoved: number;
  horizonVersion: number;
  cutoff: string;
}

@Injectable()
export class HorizonService {
  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(CLOCK) private readonly clock: Clock,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
    @Inject(RecordStore) private readonly store: RecordStore,
    @Inject(ChangeLog) private readonly changeLog: ChangeLog,
  ) {}

  /** Removes tombstones and change ids older than the horizon; run daily by the operator's scheduler. */
  async pruneTombstones(): Promise<PruneReport> {
    const now = this.clock.now();
    const cutoff = new Date(now.getTime() - this.config.tombstoneHorizonDays * 24 * 60 * 60 * 1000);
    return this.em.fork().transactional(async (em) => {
      const pruned = await this.store.pruneTombstones(em, cutoff, now);
      const changeIdsRemoved = await this.changeLog.prune(em, cutoff);
      return {
        tombstonesRemoved: pruned.removed,
        changeIdsRemoved,
        horizonVersion: pruned.horizonVersion,
        cutoff: cutoff.toISOString(),
      };
    });
  }
}
