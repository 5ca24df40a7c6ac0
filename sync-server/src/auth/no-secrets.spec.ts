// Walks through the whole identity surface with a logger that keeps every line, then scans every
// response body, log line and audit row for passwords, hashes, refresh tokens and device secrets.
import { MikroORM } from '@mikro-orm/core';
import type { EntityManager } from '@mikro-orm/postgresql';
import type { LoggerService } from '@nestjs/common';
import type { NestExpressApplication } from '@nestjs/platform-express';
import request, { type Response } from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '../app.factory';
import { loadConfig } from '../config/app-config';
import { createTestDatabase, TestClock, type TestDatabase } from '../testing/test-app';
import { UsersService } from '../users/users.service';
import { AdminSitesService } from '../admin/admin-sites.service';

class KeepingLogger implements LoggerService {
  lines: string[] = [];
  private keep(level: string, message: unknown, rest: unknown[]): void {
    this.lines.push(
      `${level} ${[message, ...rest].map((part) => (typeof part === 'string' ? part : JSON.stringify(part))).join(' ')}`,
    );
  }
  log(message: unknown, ...rest: unknown[]) {
    this.keep('log', message, rest);
  }
  error(message: unknown, ...rest: unknown[]) {
    this.keep('error', message, rest);
  }
  warn(message: unknown, ...rest: unknown[]) {
    this.keep('warn', message, rest);
  }
  debug(message: unknown, ...rest: unknown[]) {
    this.keep('debug', message, rest);
  }
  verbose(message: unknown, ...rest: unknown[]) {
    this.keep('verbose', message, rest);
  }
}

describe('secrets never leave the server', () => {
  let db: TestDatabase;
  let app: NestExpressApplication;
  const logger = new KeepingLogger();
  /** Every response, with the secret it was meant to hand out (if any). */
  const responses: { label: string; text: string; issues: string[] }[] = [];
  const secrets = {
    passwords: [] as string[],
    refreshTokens: [] as string[],
    deviceSecrets: [] as string[],
    enrolmentCodes: [] as string[],
  };

  const keep = (label: string, res: Response, issues: string[] = []): Response => {
    responses.push({ label, text: res.text ?? '', issues });
    return res;
  };

  beforeAll(async () => {
    db = await createTestDatabase();
    const config = loadConfig({ NODE_ENV: 'test', DATABASE_URL: db.url });
    app = await createApp(config, { clock: new TestClock(), logger });
    await app.init();
    const server = app.getHttpServer();
    const site = await app
      .get(AdminSitesService)
      .create(null, { name: 'Scan site', kind: 'clinic' });
    const adminPassword = 'admin-password-for-the-scan';
    secrets.passwords.push(adminPassword);
    await app.get(UsersService).create(null, {
      name: 'Scan Admin',
      email: 'scan.admin@test.fuselight.test',
      role: 'admin',
      siteIds: [],
      password: adminPassword,
    });
    const adminLogin = keep(
      'admin login',
      await request(server)
        .post('/api/auth/login')
        .send({ email: 'scan.admin@test.fuselight.test', password: adminPassword }),
    );
    secrets.refreshTokens.push(adminLogin.body.refreshToken);
    responses[responses.length - 1]!.issues.push(adminLogin.body.refreshToken);
    const admin = { Authorization: `Bearer ${adminLogin.body.accessToken}` };

    const invite = keep(
      'invite',
      await request(server)
        .post('/api/admin/users')
        .set(admin)
        .send({
          name: 'Scan Person',
          email: 'scan.person@test.fuselight.test',
          role: 'outreach',
          siteIds: [site.id],
        }),
    );
    const initialPassword = invite.body.initialPassword as string;
    expect(initialPassword).toEqual(expect.any(String));
    secrets.passwords.push(initialPassword);
    responses[responses.length - 1]!.issues.push(initialPassword);

    keep(
      'failed login',
      await request(server)
        .post('/api/auth/login')
        .send({ email: 'scan.person@test.fuselight.test', password: `${initialPassword}x` }),
    );
    secrets.passwords.push(`${initialPassword}x`);

    const register = keep(
      'register tablet',
      await request(server)
        .post('/api/admin/devices')
        .set(admin)
        .send({ label: 'Scan tablet', siteIds: [site.id] }),
    );
    secrets.enrolmentCodes.push(register.body.enrolmentCode);
    responses[responses.length - 1]!.issues.push(register.body.enrolmentCode);

    const enrol = keep(
      'enrol',
      await request(server).post('/api/devices/enrol').send({ code: register.body.enrolmentCode }),
    );
    secrets.deviceSecrets.push(enrol.body.deviceSecret);
    responses[responses.length - 1]!.issues.push(enrol.body.deviceSecret);

    const login = keep(
      'tablet login',
      await request(server).post('/api/auth/login').send({
        email: 'scan.person@test.fuselight.test',
        password: initialPassword,
        deviceSecret: enrol.body.deviceSecret,
      }),
    );
    secrets.refreshTokens.push(login.body.refreshToken);
    responses[responses.length - 1]!.issues.push(login.body.refreshToken);
    const person = { Authorization: `Bearer ${login.body.accessToken}` };

    const newPassword = 'a-brand-new-password-for-the-scan';
    secrets.passwords.push(newPassword);
    keep(
      'change password',
      await request(server)
        .post('/api/me/password')
        .set(person)
        .send({ currentPassword: initialPassword, newPassword }),
    );

    const refreshed = keep(
      'refresh',
      await request(server)
        .post('/api/auth/refresh')
        .send({ refreshToken: login.body.refreshToken }),
    );
    secrets.refreshTokens.push(refreshed.body.refreshToken);
    responses[responses.length - 1]!.issues.push(refreshed.body.refreshToken);
    keep(
      'refresh reuse',
      await request(server)
        .post('/api/auth/refresh')
        .send({ refreshToken: login.body.refreshToken }),
    );

    keep('me', await request(server).get('/api/me').set(admin));
    keep('users', await request(server).get('/api/admin/users').set(admin));
    keep('devices', await request(server).get('/api/admin/devices').set(admin));
    keep('audit', await request(server).get('/api/audit?scope=account&limit=200').set(admin));
    keep(
      'malformed login',
      await request(server)
        .post('/api/auth/login')
        .send({ email: 'scan.person@test.fuselight.test', password: 12 }),
    );
  });
  afterAll(async () => {
    await app.close();
    await db.drop();
  });

  const all = () => [
    ...secrets.passwords,
    ...secrets.refreshTokens,
    ...secrets.deviceSecrets,
    ...secrets.enrolmentCodes,
  ];

  it('shows no password, hash, refresh token or device secret in any answer but the one that issues it', async () => {
    const hashes = await (app.get(MikroORM).em as EntityManager)
      .fork()
      .getConnection()
      .execute<{ h: string }[]>(
        `select password_hash as h from app_user union all select token_hash from refresh_token
         union all select secret_hash from device where secret_hash is not null`,
      );
    expect(hashes.length).toBeGreaterThan(4);
    const leaks: string[] = [];
    for (const response of responses) {
      for (const secret of [...all(), ...hashes.map((row) => row.h)]) {
        if (!response.issues.includes(secret) && response.text.includes(secret))
          leaks.push(`${response.label} shows ${secret.slice(0, 6)}…`);
      }
      if (/argon2/.test(response.text)) leaks.push(`${response.label} shows an argon2 hash`);
    }
    expect(leaks).toEqual([]);
  });

  it('writes no secret to the log, though it did log the failed sign-in', () => {
    expect(logger.lines.some((line) => line.includes('Failed sign-in'))).toBe(true);
    const leaking = logger.lines.filter(
      (line) => all().some((secret) => line.includes(secret)) || /argon2/.test(line),
    );
    expect(leaking).toEqual([]);
  });

  it('keeps no secret in the audit trail', async () => {
    const rows = await (app.get(MikroORM).em as EntityManager)
      .fork()
      .getConnection()
      .execute<{ d: string }[]>(`select detail::text as d from audit_event`);
    expect(rows.length).toBeGreaterThan(5);
    const text = rows.map((row) => row.d).join('\n');
    for (const secret of all()) expect(text).not.toContain(secret);
  });
});
