// Builds the HTTP application the same way for `npm start` and for the tests: compression,
// security headers, CORS for the app's own origin, body limits, the /api prefix, OpenAPI, and the
// built PWA at /.
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { ConsoleLogger, type LoggerService } from '@nestjs/common';
import { NestFactory } from '@nestjs/core';
import type { NestExpressApplication } from '@nestjs/platform-express';
import { DocumentBuilder, SwaggerModule, type OpenAPIObject } from '@nestjs/swagger';
import type { NextFunction, Request, Response } from 'express';
import compression from 'compression';
import helmet from 'helmet';
import { AppModule } from './app.module';
import type { CoreOverrides } from './common/core.module';
import type { AppConfig } from './config/app-config';

export interface CreateAppOptions extends CoreOverrides {
  logger?: LoggerService | false;
}

export async function createApp(
  config: AppConfig,
  options: CreateAppOptions = {},
): Promise<NestExpressApplication> {
  const logger =
    options.logger ?? new ConsoleLogger({ json: config.env === 'production', colors: false });
  const app = await NestFactory.create<NestExpressApplication>(AppModule.forRoot(config, options), {
    logger,
    bodyParser: false,
  });
  app.useBodyParser('json', { limit: config.bodyLimitBytes });
  // Body-parser failures happen before Nest's router, so they are answered here.
  app.use((error: unknown, _req: Request, res: Response, next: NextFunction) => {
    const type = (error as { type?: string } | null)?.type;
    if (type === 'entity.too.large') {
      res.status(413).json({
        statusCode: 413,
        error: 'Payload Too Large',
        message: `body: larger than the ${Math.round(config.bodyLimitBytes / 1024 / 1024)} MB the server accepts; send fewer changes at once.`,
      });
    } else if (type === 'entity.parse.failed') {
      res
        .status(400)
        .json({ statusCode: 400, error: 'Bad Request', message: 'body: not valid JSON' });
    } else {
      next(error);
    }
  });
  app.set('trust proxy', 'loopback');
  app.disable('x-powered-by');
  app.use(compression({ threshold: COMPRESS_ABOVE_BYTES, filter: shouldCompress }));
  app.use(
    helmet({
      contentSecurityPolicy: {
        directives: {
          'img-src': ["'self'", 'data:', 'blob:'],
          'media-src': ["'self'", 'blob:'],
          'worker-src': ["'self'", 'blob:'],
          // The tablet derives key-slot keys with argon2id in WebAssembly (hash-wasm).
          'script-src': ["'self'", "'wasm-unsafe-eval'"],
        },
      },
      crossOriginEmbedderPolicy: false,
    }),
  );
  app.enableCors({ origin: config.appOrigin, credentials: false });
  // Answers of the API carry patient data (pull pages, attachments, letters, review views) or
  // identity: no browser or proxy cache may keep them (docs/threat-model.md). A route may only
  // say the same or stricter.
  app.use('/api', (_req: Request, res: Response, next: NextFunction) => {
    res.setHeader('Cache-Control', 'no-store');
    next();
  });
  app.setGlobalPrefix('api');
  SwaggerModule.setup('api/docs', app, () => buildOpenApiDocument(app), {
    jsonDocumentUrl: 'api/docs-json',
  });
  if (config.pwaDist && existsSync(join(config.pwaDist, 'index.html')))
    servePwa(app, config.pwaDist);
  return app;
}

/**
 * Answers are compressed (brotli where the browser takes it, else gzip) by the `compression`
 * middleware, chosen over files precompressed at build because one place then covers the app
 * shell, the hashed assets and the API's JSON (a pull page of records shrinks about tenfold),
 * with no second set of files to keep in step with the service worker's precache. Small answers
 * are not worth it; streams of events must reach the tablet as they are written; types the
 * `compressible` list knows as already compressed (images, PDFs, fonts in woff2) are left alone.
 */
const COMPRESS_ABOVE_BYTES = 1024;

function shouldCompress(req: Request, res: Response): boolean {
  const type = String(res.getHeader('Content-Type') ?? '');
  if (type.startsWith('text/event-stream')) return false;
  return compression.filter(req, res);
}

export function buildOpenApiDocument(app: NestExpressApplication): OpenAPIObject {
  const document = new DocumentBuilder()
    .setTitle('Fuselight clinic server')
    .setDescription(
      'Sign-in, tablets, sync (protocol 1), disputes, records, letters and attachments.',
    )
    .setVersion('1')
    .addBearerAuth()
    .build();
  return SwaggerModule.createDocument(app, document);
}

/** The built PWA at `/`; any other non-API GET that wants HTML gets the app shell. */
function servePwa(app: NestExpressApplication, dist: string): void {
  app.useStaticAssets(dist, {
    index: 'index.html',
    setHeaders: (res, path) => {
      // The service worker and the shell must be revalidated so an update is seen at once.
      // Whole file names only: a hashed asset such as useStorageWarnings-DY6da3sw.js ends in
      // "sw.js" too, and must stay cacheable for a year.
      if (/(?:^|[\\/])(sw\.js|index\.html|manifest\.webmanifest)$/.test(path)) {
        res.setHeader('Cache-Control', 'no-cache');
      } else if (path.includes(`${join(dist, 'assets')}`)) {
        res.setHeader('Cache-Control', 'public, max-age=31536000, immutable');
      }
    },
  });
  app.use((req: Request, res: Response, next: NextFunction) => {
    if (req.method !== 'GET' || req.path.startsWith('/api') || !req.accepts('html')) return next();
    res.setHeader('Cache-Control', 'no-cache');
    res.sendFile(join(dist, 'index.html'));
  });
}
