import 'reflect-metadata';
import { Logger } from '@nestjs/common';
import { createApp } from './app.factory';
import { loadConfig } from './config/app-config';

async function bootstrap(): Promise<void> {
  const config = loadConfig();
  const app = await createApp(config);
  app.enableShutdownHooks();
  if (config.jwtSecretIsDefault) {
    Logger.warn(
      'JWT_SECRET is not set: using the development default. Never do this in production.',
      'Config',
    );
  }
  await app.listen(config.port, config.host);
  Logger.log(`Fuselight server listening on http://${config.host}:${config.port}`, 'Bootstrap');
}

bootstrap().catch((error: unknown) => {
  console.error(
    `Fuselight server failed to start: ${error instanceof Error ? error.message : String(error)}`,
  );
  process.exit(1);
});
