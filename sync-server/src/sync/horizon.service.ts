// The tombstone horizon (sync-protocol.md, "Pull"): tombstones and the change-id log are kept for
// config.tombstoneHorizonDays, longer than any clinic's offline period. Pruning moves the horizon
// marker to the newest version it removed; a device whose cursor is older may have missed a
// removed tombstone, so its pull answers `{ "reset": true, "reason": "horizon" }` and it pulls
// again from 0.
import { EntityManager } from '@mikro-orm/postgresql';
import { Inject, Injectable } from '@nestjs/common';
import { CLOCK, type Clock } from '../common/clock.provider';
import { APP_CONFIG, type AppConfig } from '../config/app-config';
import { sqlRows } from '../records/sql';

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
  ) {}

  /** Removes tombstones and change ids older than the horizon; run daily by the operator's scheduler. */
  async pruneTombstones(): Promise<PruneReport> {
    const now = this.clock.now();
    const cutoff = new Date(now.getTime() - this.config.tombstoneHorizonDays * 24 * 60 * 60 * 1000);
    return this.em.fork().transactional(async (em) => {
      const [row] = await sqlRows<{ removed: string; horizon: string }>(
        em,
        `with "pruned" as (
           delete from "sync_record" where "deleted" and "updated_at" < ?::timestamptz returning "version"
         )
         update "sync_horizon" set
           "horizon_version" = greatest("horizon_version", coalesce((select max("version") from "pruned"), 0)),
           "pruned_at" = ?::timestamptz
         returning (select count(*) from "pruned")::text as "removed", "horizon_version"::text as "horizon"`,
        [cutoff.toISOString(), now.toISOString()],
      );
      const changes = await sqlRows<{ n: string }>(
        em,
        `with "gone" as (delete from "sync_change" where "received_at" < ?::timestamptz returning 1)
         select count(*)::text as "n" from "gone"`,
        [cutoff.toISOString()],
      );
      return {
        tombstonesRemoved: Number(row?.removed ?? 0),
        changeIdsRemoved: Number(changes[0]?.n ?? 0),
        horizonVersion: Number(row?.horizon ?? 0),
        cutoff: cutoff.toISOString(),
      };
    });
  }
}
