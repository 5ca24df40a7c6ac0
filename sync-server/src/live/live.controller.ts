import { BadRequestException, Controller, Get, Headers, Inject, Req, Res } from '@nestjs/common';
import { JwtService } from '@nestjs/jwt';
import { ApiBearerAuth, ApiOkResponse, ApiOperation, ApiProduces } from '@nestjs/swagger';
import type { Request, Response } from 'express';
import { CurrentUser, DeviceBound, Roles } from '../auth/auth.decorators';
import type { AuthUser } from '../auth/auth-user';
import { LiveHub } from './live-hub';

/** Live changes of sync protocol 1 (docs/sync-protocol.md, "Live changes"). */
@Controller('sync')
@DeviceBound()
@ApiBearerAuth()
export class LiveController {
  constructor(
    @Inject(LiveHub) private readonly hub: LiveHub,
    @Inject(JwtService) private readonly jwt: JwtService,
  ) {}

  @Get('events')
  @ApiOperation({
    summary:
      'Server-sent events: `changed` {version} when a change in one of the device’s sites commits (pull then), `review` for the Review desk, keep-alive comments.',
  })
  @ApiProduces('text/event-stream')
  @ApiOkResponse({ description: 'An open text/event-stream.' })
  async events(
    @CurrentUser() user: AuthUser,
    @Headers('last-event-id') lastEventIdHeader: string | undefined,
    @Headers('authorization') authorization: string | undefined,
    @Req() req: Request,
    @Res() res: Response,
  ): Promise<void> {
    await openStream(this.hub, this.jwt, user, { lastEventIdHeader, authorization, req, res });
  }
}

/**
 * The Review desk's own stream, for a supervisor signed in at a desk as well as on a tablet:
 * `review` events only (docs/sync-protocol.md, "Live changes").
 */
@Controller('review')
@Roles('supervisor')
@ApiBearerAuth()
export class ReviewEventsController {
  constructor(
    @Inject(LiveHub) private readonly hub: LiveHub,
    @Inject(JwtService) private readonly jwt: JwtService,
  ) {}

  @Get('events')
  @ApiOperation({
    summary:
      'Server-sent events for the Review desk: `review` when the open Disputes or the countersign queue of the supervisor’s sites may have changed, keep-alive comments.',
  })
  @ApiProduces('text/event-stream')
  @ApiOkResponse({ description: 'An open text/event-stream.' })
  async events(
    @CurrentUser() user: AuthUser,
    @Headers('authorization') authorization: string | undefined,
    @Req() req: Request,
    @Res() res: Response,
  ): Promise<void> {
    await openStream(this.hub, this.jwt, user, {
      lastEventIdHeader: undefined,
      authorization,
      req,
      res,
      reviewOnly: true,
    });
  }
}

async function openStream(
  hub: LiveHub,
  jwt: JwtService,
  user: AuthUser,
  request: {
    lastEventIdHeader: string | undefined;
    authorization: string | undefined;
    req: Request;
    res: Response;
    reviewOnly?: boolean;
  },
): Promise<void> {
  const { req, res } = request;
  const lastEventId = parseLastEventId(request.lastEventIdHeader);
  const expiresAt = expiryOf(jwt, request.authorization);
  res.status(200);
  res.setHeader('Content-Type', 'text/event-stream; charset=utf-8');
  res.setHeader('Cache-Control', 'no-cache, no-transform');
  res.setHeader('Connection', 'keep-alive');
  res.setHeader('X-Accel-Buffering', 'no');
  res.flushHeaders();
  req.socket.setNoDelay(true);
  req.socket.setTimeout(0);
  let forget: (() => void) | null = null;
  let closed = false;
  res.on('close', () => {
    closed = true;
    forget?.();
  });
  forget = await hub.open(res, user, {
    lastEventId,
    expiresAt,
    reviewOnly: request.reviewOnly === true,
  });
  if (closed) forget();
}

/** The access token's expiry in ms (the guard has already checked the token). */
function expiryOf(jwt: JwtService, authorization: string | undefined): number | null {
  const token = /^Bearer (.+)$/.exec(authorization ?? '')?.[1];
  const claims = token ? (jwt.decode<{ exp?: unknown } | null>(token) ?? null) : null;
  return typeof claims?.exp === 'number' ? claims.exp * 1000 : null;
}

/** The Last-Event-ID header: absent, or the version of the last `changed` event received. */
export function parseLastEventId(header: string | undefined): number | null {
  if (header === undefined || header === '') return null;
  const value = /^\d{1,16}$/.test(header) ? Number(header) : NaN;
  if (!Number.isSafeInteger(value)) {
    const shown = header.length > 40 ? `${header.slice(0, 40)}…` : header;
    throw new BadRequestException(
      `Last-Event-ID: "${shown}" is not a version number; send the id of the last event this tablet received, or no Last-Event-ID at all.`,
    );
  }
  return value;
}
