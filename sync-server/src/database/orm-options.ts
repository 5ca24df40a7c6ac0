import { defineConfig, type Options } from '@mikro-orm/postgresql';
import { Migrator } from '@mikro-orm/migrations';
import { migrationsList } from '../migrations/index';

/** The longest a request waits on the database before it is answered 503: connect, then query. */
export const DATABASE_WAIT_LIMIT_MS = 8_000 + 20_000;

/**
 * MikroORM options shared by the server, the migrate command and the tests. Timeouts bound how
 * long a stuck transaction can hold back pull cursors (docs/sync-protocol.md, guarantee 4).
 */
export function ormOptions(databaseUrl: string, extra: Partial<Options> = {}): Options {
  return defineConfig({
    clientUrl: databaseUrl,
    extensions: [Migrator],
    migrations: { migrationsList, transactional: true, allOrNothing: true, snapshot: false },
    discovery: { warnWhenNoEntities: false },
    pool: { min: 0, max: 10 },
    driverOptions: {
      connection: {
        statement_timeout: 15_000,
        idle_in_transaction_session_timeout: 15_000,
        // With PostgreSQL down or stuck, a request fails within DATABASE_WAIT_LIMIT_MS and is
        // answered 503 (common/database-unavailable.ts) instead of hanging.
        connectionTimeoutMillis: 5_000,
        query_timeout: 20_000,
      },
      acquireConnectionTimeout: 8_000,
    },
    allowGlobalContext: false,
    debug: false,
    ...extra,
  });
}
