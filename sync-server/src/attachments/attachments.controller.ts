import {
  Controller,
  Get,
  Head,
  Headers,
  HttpCode,
  Inject,
  Param,
  Put,
  Req,
  Res,
  StreamableFile,
} from '@nestjs/common';
import { ApiOperation, ApiTags } from '@nestjs/swagger';
import type { Request, Response } from 'express';
import { CurrentUser } from '../auth/auth.decorators';
import type { AuthUser } from '../auth/auth-user';
import { AttachmentsService, type UploadState } from './attachments.service';

function progressHeaders(res: Response, state: UploadState): void {
  res.setHeader('Upload-Offset', String(state.offset));
  res.setHeader('Upload-Length', String(state.total));
  res.setHeader('Upload-Complete', state.complete ? '?1' : '?0');
  res.setHeader('Cache-Control', 'no-store');
}

/**
 * Attachment bytes. A tablet asks HEAD /attachments/:sha256 how much the server holds, then PUTs
 * the rest (whole, or in parts with Content-Range); both name the attachment record in
 * X-Attachment-Id. GET /attachments/:id streams the file for the record.
 */
@ApiTags('attachments')
@Controller('attachments')
export class AttachmentsController {
  constructor(@Inject(AttachmentsService) private readonly attachments: AttachmentsService) {}

  @Head(':sha256')
  @ApiOperation({
    summary: 'How many bytes of this content the server holds (Upload-Offset, Upload-Complete)',
  })
  async head(
    @CurrentUser() user: AuthUser,
    @Param('sha256') sha256: string,
    @Headers('x-attachment-id') attachmentId: string | undefined,
    @Res({ passthrough: true }) res: Response,
  ): Promise<void> {
    progressHeaders(res, await this.attachments.state(user, sha256, attachmentId));
  }

  @Put(':sha256')
  @HttpCode(200)
  @ApiOperation({ summary: 'Upload the file or its next part; idempotent by content hash' })
  async put(
    @CurrentUser() user: AuthUser,
    @Param('sha256') sha256: string,
    @Headers('x-attachment-id') attachmentId: string | undefined,
    @Req() req: Request,
    @Res({ passthrough: true }) res: Response,
  ): Promise<UploadState> {
    const { created, ...state } = await this.attachments.upload(user, sha256, attachmentId, req);
    progressHeaders(res, state);
    if (created) res.status(201);
    return state;
  }

  @Get(':id')
  @ApiOperation({ summary: 'The file of an attachment record, for a caller in its site' })
  async get(
    @CurrentUser() user: AuthUser,
    @Param('id') id: string,
    @Res({ passthrough: true }) res: Response,
  ): Promise<StreamableFile> {
    const file = await this.attachments.download(user, id);
    res.setHeader('ETag', `"${file.sha256}"`);
    // The tablet keeps the file sealed in its own store; the browser's cache must not hold it.
    res.setHeader('Cache-Control', 'no-store');
    res.setHeader('X-Content-Type-Options', 'nosniff');
    return new StreamableFile(file.stream, { type: file.mimeType, length: file.byteSize });
  }
}
