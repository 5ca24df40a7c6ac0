// The server's entry: SERVER_PROCESSES processes (default 2) sharing one port through Node's own
// `cluster` module. The primary only starts, restarts and stops the workers; each worker is a
// whole, stateless server (its own database pool and its own listening connection for live
// changes), so a tablet may be served by any of them from one request to the next.
import 'reflect-metadata';
import cluster from 'node:cluster';
import { Logger } from '@nestjs/common';
import { createApp } from './app.factory';
import { loadConfig } from './config/app-config';

async function serve(): Promise<void> {
  const config = loadConfig();
  const app = await createApp(config);
  app.enableShutdownHooks();
  if (config.jwtSecretIsDefault && (cluster.isPrimary || cluster.worker?.id === 1)) {
    Logger.warn(
      'JWT_SECRET is not set: using the development default. Never do this in production.',
      'Config',
    );
  }
  await app.listen(config.port, config.host);
  const who = cluster.isWorker ? ` (process ${cluster.worker?.id}, pid ${process.pid})` : '';
  Logger.log(
    `Fuselight server listening on http://${config.host}:${config.port}${who}`,
    'Bootstrap',
  );
}

/** Starts the workers, starts a new one for any that dies, and stops them all on SIGINT/SIGTERM. */
function supervise(processes: number): void {
  let stopping = false;
  const started = Date.now();
  for (let i = 0; i < processes; i += 1) cluster.fork();
  cluster.on('exit', (worker, code, signal) => {
    if (stopping) {
      if (Object.keys(cluster.workers ?? {}).length === 0) process.exit(0);
      return;
    }
    // A worker that cannot even start (a bad setting, no database) would only fail again.
    if (Date.now() - started < 10_000 && code !== 0) {
      console.error(`Fuselight server process ${worker.id} failed to start; stopping.`);
      stopping = true;
      for (const other of Object.values(cluster.workers ?? {})) other?.kill('SIGTERM');
      process.exitCode = 1;
      if (Object.keys(cluster.workers ?? {}).length === 0) process.exit(1);
      return;
    }
    console.error(
      `Fuselight server process ${worker.id} stopped (${signal ?? `exit ${code}`}); starting another.`,
    );
    cluster.fork();
  });
  const stop = () => {
    if (stopping) return;
    stopping = true;
    for (const worker of Object.values(cluster.workers ?? {})) worker?.kill('SIGTERM');
    setTimeout(() => process.exit(0), 10_000).unref();
  };
  process.on('SIGINT', stop);
  process.on('SIGTERM', stop);
}

function main(): void {
  const processes = loadConfig().serverProcesses;
  if (cluster.isPrimary && processes > 1) {
    supervise(processes);
    return;
  }
  serve().catch((error: unknown) => {
    console.error(
      `Fuselight server failed to start: ${error instanceof Error ? error.message : String(error)}`,
    );
    process.exit(1);
  });
}

main();
