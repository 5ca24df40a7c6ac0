// Operator commands used by scripts/start.mjs: `migrate` applies committed migrations,
// `seed` loads the invented demo scenario (refused in production) and prints its sign-ins.
import 'reflect-metadata';
import { writeFileSync } from 'node:fs';
import { NestFactory } from '@nestjs/core';
import { buildOpenApiDocument, createApp } from './app.factory';
import { AppModule } from './app.module';
import { stableJson } from './openapi/stable-json';
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
    case 'openapi': {
      // Regenerates the committed OpenAPI document (reviewed as code; a test keeps it current).
      const app = await createApp(config, { logger: false });
      try {
        const target = process.argv[3] ?? 'openapi.json';
        writeFileSync(target, `${stableJson(buildOpenApiDocument(app))}\n`);
        console.log(`Wrote ${target}`);
      } finally {
        await app.close();
      }
      return;
    }
    default:
      throw new Error(`Unknown command "${command ?? ''}"; use "migrate", "seed" or "openapi".`);
  }
}

main(process.argv[2]).catch((error: unknown) => {
  console.error(error instanceof Error ? error.message : String(error));
  process.exit(1);
});
