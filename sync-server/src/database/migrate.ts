import { MikroORM } from '@mikro-orm/postgresql';
import { ormOptions } from './orm-options';

/** Applies every pending committed migration (never schema auto-sync). Returns their names. */
export async function migrateDatabase(databaseUrl: string): Promise<string[]> {
  const orm = await MikroORM.init(ormOptions(databaseUrl, { entities: [] }));
  try {
    const applied = await orm.getMigrator().up();
    return applied.map((m) => m.name);
  } finally {
    await orm.close(true);
  }
}
