// Operator commands used by scripts/start.mjs: `migrate` applies committed migrations,
// `seed` loads the invented demo scenario (refused in production) and prints its sign-ins.
import 'reflect-metadata';
import { NestFactory } from '@nestjs/core';
import { AppModule } from './app.module';
import { loadConfig } from './config/app-config';
import { migrateDatabase } from './database/migrate';
import { SeedService } from './seed/seed.service';

async function main(command: string | undefined): Promise<void> {
  const config = loadConfig();
  switch (command) {
    case 'migrate': {
      const applied = await migrateDatabase(config.databaseUrl);
      console.log(
        applied.length
          ? `Applied migrations: ${applied.join(', ')}`
          : 'Database schema is up to date.',
      );
      return;
    }
    case 'seed': {
      if (config.env === 'production') throw new Error('The demo seed never runs in production.');
      const app = await NestFactory.createApplicationContext(AppModule.forRoot(config), {
        logger: ['error', 'warn'],
      });
      try {
        const lines = await app.get(SeedService).run();
        for (const line of lines) console.log(line);
      } finally {
        await app.close();
      }
      return;
    }
    default:
      throw new Error(`Unknown command "${command ?? ''}"; use "migrate" or "seed".`);
  }
}

main(process.argv[2]).catch((error: unknown) => {
  console.error(error instanceof Error ? error.message : String(error));
  process.exit(1);
});
