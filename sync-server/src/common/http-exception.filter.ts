// Turns every failure into a JSON answer a person can act on, and never leaks internals:
// HttpExceptions keep their status and message; body-parser errors become 400/413; a database
// that cannot be reached is a 503 with Retry-After (database-unavailable.ts); anything else is
// logged and answered with a plain 500.
import {
  Catch,
  HttpException,
  HttpStatus,
  Logger,
  type ArgumentsHost,
  type ExceptionFilter,
} from '@nestjs/common';
import type { Response } from 'express';
import { DATABASE_UNAVAILABLE_MESSAGE, isDatabaseUnavailable } from './database-unavailable';

interface BodyParserError {
  type?: string;
  status?: number;
  message?: string;
}

@Catch()
export class AllExceptionsFilter implements ExceptionFilter {
  private readonly logger = new Logger('Errors');

  catch(exception: unknown, host: ArgumentsHost): void {
    const response = host.switchToHttp().getResponse<Response>();
    const parserError =
      (exception as { cause?: BodyParserError })?.cause ?? (exception as BodyParserError);
    if (parserError?.type === 'entity.too.large') {
      response.status(413).json({
        statusCode: 413,
        error: 'Payload Too Large',
        message:
          'The request body is larger than the server accepts (5 MB); send fewer changes at once.',
      });
      return;
    }
    if (parserError?.type === 'entity.parse.failed') {
      response.status(400).json({
        statusCode: 400,
        error: 'Bad Request',
        message: 'body: not valid JSON',
      });
      return;
    }
    if (exception instanceof HttpException) {
      const status = exception.getStatus();
      const body = exception.getResponse();
      const message =
        typeof body === 'string'
          ? body
          : ((body as { message?: unknown }).message ?? exception.message);
      response.status(status).json({
        statusCode: status,
        error: HttpStatus[status] ?? 'Error',
        message: Array.isArray(message) ? message.join('; ') : message,
        ...(typeof body === 'object' && body !== null ? extraFields(body) : {}),
      });
      return;
    }
    if (isDatabaseUnavailable(exception)) {
      this.logger.warn(
        `database unavailable: ${exception instanceof Error ? exception.message : String(exception)}`,
      );
      response.setHeader('Retry-After', '5');
      response.status(503).json({
        statusCode: 503,
        error: 'Service Unavailable',
        message: DATABASE_UNAVAILABLE_MESSAGE,
      });
      return;
    }
    this.logger.error(
      exception instanceof Error ? (exception.stack ?? exception.message) : String(exception),
    );
    response.status(500).json({
      statusCode: 500,
      error: 'Internal Server Error',
      message: 'The server failed to handle this request; nothing was changed by the failed step.',
    });
  }
}

/** Extra structured fields an exception chose to carry (e.g. `reset`, `erase`). */
function extraFields(body: object): Record<string, unknown> {
  const { statusCode: _s, error: _e, message: _m, ...rest } = body as Record<string, unknown>;
  return rest;
}
