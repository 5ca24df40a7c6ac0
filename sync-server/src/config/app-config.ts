// Server configuration, read once from environment variables. Every value has a safe local
// default for development and tests; a production deployment must set the secrets (see README).
export interface AppConfig {
  env: 'development' | 'test' | 'production';
  host: string;
  port: number;
  databaseUrl: string;
  /** Secret used to sign access tokens. */
  jwtSecret: string;
  /** True when jwtSecret is the built-in development default. */
  jwtSecretIsDefault: boolean;
  accessTokenTtlSeconds: number;
  refreshTokenTtlDays: number;
  /** Origin allowed by CORS (the PWA's own origin). */
  appOrigin: string;
  /** Folder holding the built PWA to serve at `/`, or null to serve the API only. */
  pwaDist: string | null;
  /** Largest request body, in bytes (sync push allows 5 MB). */
  bodyLimitBytes: number;
  /** How long tombstones and change history are kept; a pull cursor older than this resets. */
  tombstoneHorizonDays: number;
  smtp: { host: string; port: number; from: string; secure: boolean };
  s3: {
    endpoint: string | null;
    region: string;
    bucket: string;
    accessKeyId: string;
    secretAccessKey: string;
    forcePathStyle: boolean;
  };
  /** Largest attachment accepted, in bytes. */
  attachmentMaxBytes: number;
  /**
   * Base URL of the hospital's FHIR server that signed visits are handed to (FHIR_BASE_URL), or
   * null: then nothing is sent (docs/fhir.md).
   */
  fhirBaseUrl: string | null;
  /** Seed the invented demo clinic (never in production). */
  seedDemo: boolean;
  /** How often an open live-changes stream gets a keep-alive comment, in ms (at most 25 s). */
  liveKeepAliveMs: number;
  /** Server processes `npm start` (main.ts) runs on the one port; 1 runs no cluster. */
  serverProcesses: number;
}

export const APP_CONFIG = Symbol('APP_CONFIG');

const DEV_JWT_SECRET = 'fuselight-development-secret-do-not-use-in-production';

function int(env: NodeJS.ProcessEnv, name: string, fallback: number): number {
  const raw = env[name];
  if (raw === undefined || raw === '') return fallback;
  const value = Number(raw);
  if (!Number.isInteger(value) || value < 0) {
    throw new Error(`Configuration: ${name} must be a non-negative whole number, got "${raw}"`);
  }
  return value;
}

function fhirBaseUrl(raw: string | undefined): string | null {
  if (raw === undefined || raw.trim() === '') return null;
  let url: URL;
  try {
    url = new URL(raw.trim());
  } catch {
    throw new Error(`Configuration: FHIR_BASE_URL must be an http(s) URL, got "${raw}"`);
  }
  if (url.protocol !== 'http:' && url.protocol !== 'https:') {
    throw new Error(`Configuration: FHIR_BASE_URL must be an http(s) URL, got "${raw}"`);
  }
  return url.toString().replace(/\/+$/, '');
}

function bounded(
  env: NodeJS.ProcessEnv,
  name: string,
  fallback: number,
  min: number,
  max: number,
): number {
  const value = int(env, name, fallback);
  if (value < min || value > max) {
    throw new Error(`Configuration: ${name} must be between ${min} and ${max}, got "${value}"`);
  }
  return value;
}

export function loadConfig(env: NodeJS.ProcessEnv = process.env): AppConfig {
  const nodeEnv =
    env.NODE_ENV === 'production' ? 'production' : env.NODE_ENV === 'test' ? 'test' : 'development';
  const jwtSecret = env.JWT_SECRET ?? '';
  if (nodeEnv === 'production' && jwtSecret.length < 32) {
    throw new Error(
      'Configuration: JWT_SECRET must be set to at least 32 characters in production',
    );
  }
  const port = int(env, 'PORT', 3000);
  return {
    env: nodeEnv,
    host: env.HOST ?? '127.0.0.1',
    port,
    databaseUrl: env.DATABASE_URL ?? 'postgres://postgres@127.0.0.1:54329/fuselight',
    jwtSecret: jwtSecret || DEV_JWT_SECRET,
    jwtSecretIsDefault: !jwtSecret,
    accessTokenTtlSeconds: int(env, 'ACCESS_TOKEN_TTL_SECONDS', 900),
    refreshTokenTtlDays: int(env, 'REFRESH_TOKEN_TTL_DAYS', 30),
    appOrigin: env.APP_ORIGIN ?? `http://127.0.0.1:${port}`,
    pwaDist: env.PWA_DIST ?? null,
    bodyLimitBytes: int(env, 'BODY_LIMIT_BYTES', 5 * 1024 * 1024),
    tombstoneHorizonDays: int(env, 'TOMBSTONE_HORIZON_DAYS', 90),
    smtp: {
      host: env.SMTP_HOST ?? '127.0.0.1',
      port: int(env, 'SMTP_PORT', 1025),
      from: env.MAIL_FROM ?? 'Fuselight <no-reply@demo.fuselight.test>',
      secure: env.SMTP_SECURE === 'true',
    },
    s3: {
      endpoint: env.S3_ENDPOINT ?? 'http://127.0.0.1:4569',
      region: env.S3_REGION ?? 'us-east-1',
      bucket: env.S3_BUCKET ?? 'fuselight-attachments',
      accessKeyId: env.S3_ACCESS_KEY_ID ?? 'S3RVER',
      secretAccessKey: env.S3_SECRET_ACCESS_KEY ?? 'S3RVER',
      forcePathStyle: env.S3_FORCE_PATH_STYLE !== 'false',
    },
    attachmentMaxBytes: int(env, 'ATTACHMENT_MAX_BYTES', 15 * 1024 * 1024),
    fhirBaseUrl: fhirBaseUrl(env.FHIR_BASE_URL),
    seedDemo: nodeEnv !== 'production' && env.SEED_DEMO === 'true',
    liveKeepAliveMs: bounded(env, 'LIVE_KEEPALIVE_MS', 20_000, 50, 25_000),
    serverProcesses: bounded(env, 'SERVER_PROCESSES', 2, 1, 64),
  };
}
