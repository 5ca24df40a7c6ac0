// Counts failed attempts (sign-ins, enrolments) in PostgreSQL so every server process behind a
// load balancer sees the same counts. Fixed windows keyed by what is limited ("sign-in:account:…",
// "sign-in:address:…", "enrol:address:…"); time comes from the injected clock.
import { EntityManager } from '@mikro-orm/postgresql';
import { HttpException, HttpStatus, Inject, Injectable } from '@nestjs/common';
import { CLOCK, type Clock } from '../common/clock.provider';

export interface AttemptLimit {
  /** Failed attempts allowed within one window. */
  max: number;
  windowSeconds: number;
}

export const ATTEMPT_LIMITS = {
  signInPerAccount: { max: 5, windowSeconds: 15 * 60 },
  signInPerAddress: { max: 30, windowSeconds: 15 * 60 },
  enrolPerAddress: { max: 10, windowSeconds: 15 * 60 },
} satisfies Record<string, AttemptLimit>;

interface CounterRow {
  count: number;
  window_started_at: Date;
}

@Injectable()
export class AttemptLimiter {
  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(CLOCK) private readonly clock: Clock,
  ) {}

  /** Throws 429 when `key` has used up its failed attempts in the current window. */
  async assertAllowed(key: string, limit: AttemptLimit, what: string): Promise<void> {
    const rows = await this.em
      .fork()
      .execute<CounterRow[]>(
        'select "count", "window_started_at" from "attempt_counter" where "key" = ?',
        [key],
      );
    const row = rows[0];
    if (!row) return;
    const windowEnds = new Date(row.window_started_at).getTime() + limit.windowSeconds * 1000;
    const now = this.clock.now().getTime();
    if (now < windowEnds && row.count >= limit.max) {
      const minutes = Math.max(1, Math.ceil((windowEnds - now) / 60_000));
      throw new HttpException(
        {
          message: `Too many failed ${what}; try again in ${minutes} minute${minutes === 1 ? '' : 's'}.`,
          retryAfterSeconds: Math.ceil((windowEnds - now) / 1000),
        },
        HttpStatus.TOO_MANY_REQUESTS,
      );
    }
  }

  /** Counts one failed attempt; a window that has ended starts again at 1. */
  async recordFailure(key: string, limit: AttemptLimit): Promise<number> {
    const now = this.clock.now();
    const windowStartedBefore = new Date(now.getTime() - limit.windowSeconds * 1000);
    const rows = await this.em.fork().execute<{ count: number }[]>(
      `insert into "attempt_counter" ("key", "window_started_at", "count") values (?, ?, 1)
       on conflict ("key") do update set
         "count" = case when "attempt_counter"."window_started_at" <= ? then 1
                        else "attempt_counter"."count" + 1 end,
         "window_started_at" = case when "attempt_counter"."window_started_at" <= ? then excluded."window_started_at"
                                    else "attempt_counter"."window_started_at" end
       returning "count"`,
      [key, now, windowStartedBefore, windowStartedBefore],
    );
    return rows[0]?.count ?? 1;
  }

  /** Forgets the failures of `key` (an account that signed in successfully). */
  async clear(key: string): Promise<void> {
    await this.em.fork().execute('delete from "attempt_counter" where "key" = ?', [key]);
  }
}
