// Seeds the invented clinical scenario (clinical-demo.data.ts) through the sync storage, as
// changes pushed by the server device under each site's demo clinician, so a tablet's first sync
// pulls it like any other record. Change ids are fixed: seeding again replays them and changes
// nothing.
import type { EntityManager } from '@mikro-orm/postgresql';
import { Inject } from '@nestjs/common';
import { ModuleRef } from '@nestjs/core';
import {
  MAX_CHANGES_PER_PUSH,
  PROTOCOL_VERSION,
  SCHEMA_VERSION,
  formatStamp,
  type PushChange,
} from '@fuselight/shared';
import type { AuthUser } from '../auth/auth-user';
import { CLOCK, type Clock } from '../common/clock.provider';
import { SERVER_DEVICE } from '../records/stored-record';
import { SyncService } from '../sync/sync.service';
import { clinicalDemoRecords, type DemoRecord } from './clinical-demo.data';
import { DEMO_PEOPLE, DEMO_SITES } from './demo-scenario';
import type { SeedStep } from './seed-step';

/** A fixed change id per record: the record id with its own first group. */
export function demoChangeId(recordId: string): string {
  return `01935a11${recordId.slice(8)}`;
}

/** The seeding day in the demo clinic's own time zone (YYYY-MM-DD). */
export function demoToday(now: Date, timeZone = DEMO_SITES.main.timeZone): string {
  return new Intl.DateTimeFormat('en-CA', {
    timeZone,
    year: 'numeric',
    month: '2-digit',
    day: '2-digit',
  }).format(now);
}

function pusherFor(siteId: string): AuthUser {
  const person = siteId === DEMO_SITES.outreach.id ? DEMO_PEOPLE.outreach : DEMO_PEOPLE.orthoptist;
  return {
    userId: person.id,
    role: person.role,
    siteIds: [siteId],
    deviceId: null,
    sessionId: 'demo-seed',
  };
}

export class ClinicalDemoSeed implements SeedStep {
  readonly name = 'clinical demo scenario';

  constructor(
    @Inject(ModuleRef) private readonly moduleRef: ModuleRef,
    @Inject(CLOCK) private readonly clock: Clock,
  ) {}

  /**
   * `now` defaults to the server's own clock, which the push judges the stamps by: real time in
   * production, the test's fixed clock under test (real time there put the stamps more than a
   * day ahead of it once the calendar passed the test clock's date).
   */
  async run(_em: EntityManager, now: Date = this.clock.now()): Promise<string[]> {
    const sync = this.moduleRef.get(SyncService, { strict: false });
    const records = clinicalDemoRecords({ today: demoToday(now) });
    const bySite = new Map<string, DemoRecord[]>();
    for (const record of records) {
      const siteId = String(record.fields.siteId);
      bySite.set(siteId, [...(bySite.get(siteId) ?? []), record]);
    }
    let counter = 0;
    const stamp = () => {
      counter += 1;
      return formatStamp({
        wallMs: now.getTime(),
        counter: counter % 100_000,
        deviceId: SERVER_DEVICE,
      });
    };
    const tally = { applied: 0, replayed: 0, rejected: [] as string[] };
    for (const [siteId, siteRecords] of bySite) {
      const changes: PushChange[] = siteRecords.map((record) => ({
        changeId: demoChangeId(record.id),
        collection: record.collection,
        recordId: record.id,
        baseVersion: 0,
        hlc: stamp(),
        fields: record.fields as PushChange['fields'],
      }));
      for (let i = 0; i < changes.length; i += MAX_CHANGES_PER_PUSH) {
        const response = await sync.push(pusherFor(siteId), {
          protocol: PROTOCOL_VERSION,
          schemaVersion: SCHEMA_VERSION,
          changes: changes.slice(i, i + MAX_CHANGES_PER_PUSH),
        });
        for (const result of response.results) {
          if (result.status === 'rejected')
            tally.rejected.push(`${result.changeId}: ${result.error}`);
          else if (result.replayed) tally.replayed += 1;
          else tally.applied += 1;
        }
      }
    }
    if (tally.rejected.length > 0) {
      throw new Error(`The clinical demo scenario was refused:\n  ${tally.rejected.join('\n  ')}`);
    }
    const patients = records.filter((r) => r.collection === 'patient').length;
    return [
      `Clinical demo: ${patients} patients, ${records.length} records (${tally.applied} new, ${tally.replayed} already there).`,
    ];
  }
}
