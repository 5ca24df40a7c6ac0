// Test factories for the server tier: a fresh database per call (cloned from the migrated
// template), the real Nest application on it, and a supertest agent.
import type { EntityManager } from '@mikro-orm/postgresql';
import { MikroORM } from '@mikro-orm/core';
import type { NestExpressApplication } from '@nestjs/platform-express';
import pg from 'pg';
import { inject } from 'vitest';
import { createApp } from '../app.factory';
import type { Clock } from '../common/clock.provider';
import { loadConfig, type AppConfig } from '../config/app-config';
import type { PushObserver } from '../sync/push-observer';
import { databaseUrl } from './global-setup';

let counter = 0;

export interface TestDatabase {
  url: string;
  name: string;
  drop(): Promise<void>;
}

/** A fresh database cloned from the migrated template, or an empty one (to restore into). */
export async function createTestDatabase(options: { empty?: boolean } = {}): Promise<TestDatabase> {
  const admin = inject('adminDatabaseUrl');
  const template = inject('templateDatabase');
  const name = `t_${process.pid}_${Date.now()}_${counter++}`;
  const client = new pg.Client({ connectionString: admin });
  await client.connect();
  await client.query(
    options.empty
      ? `create database "${name}"`
      : `create database "${name}" template "${template}"`,
  );
  await client.end();
  return {
    url: databaseUrl(admin, name),
    name,
    async drop() {
      const c = new pg.Client({ connectionString: admin });
      await c.connect();
      await c.query(`drop database if exists "${name}" with (force)`);
      await c.end();
    },
  };
}

/** A clock tests can move. */
export class TestClock implements Clock {
  constructor(private current = new Date('2026-12-01T09:00:00.000Z')) {}
  now(): Date {
    return new Date(this.current.getTime());
  }
  set(date: Date | string): void {
    this.current = new Date(date);
  }
  advance(ms: number): void {
    this.current = new Date(this.current.getTime() + ms);
  }
}

export interface TestApp {
  app: NestExpressApplication;
  config: AppConfig;
  db: TestDatabase;
  clock: TestClock;
  /** A forked entity manager for arranging and asserting rows. */
  em(): EntityManager;
  close(): Promise<void>;
}

export async function createTestApp(
  options: {
    env?: Record<string, string>;
    clock?: TestClock;
    pushObserver?: PushObserver;
    /** Run on this database (a restored backup) instead of a fresh clone of the template. */
    db?: TestDatabase;
  } = {},
): Promise<TestApp> {
  const db = options.db ?? (await createTestDatabase());
  const config = loadConfig({ NODE_ENV: 'test', DATABASE_URL: db.url, ...options.env });
  const clock = options.clock ?? new TestClock();
  const app = await createApp(config, { clock, logger: false, pushObserver: options.pushObserver });
  await app.init();
  return {
    app,
    config,
    db,
    clock,
    em: () => (app.get(MikroORM).em as EntityManager).fork(),
    async close() {
      await app.close();
      await db.drop();
    },
  };
}
