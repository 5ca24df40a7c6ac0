import {
  Controller,
  Get,
  Header,
  Inject,
  Param,
  ParseUUIDPipe,
  StreamableFile,
} from '@nestjs/common';
import { ApiOperation, ApiTags } from '@nestjs/swagger';
import { CurrentUser } from '../auth/auth.decorators';
import type { AuthUser } from '../auth/auth-user';
import { LettersService } from './letters.service';

@ApiTags('letters')
@Controller('letters')
export class LettersController {
  constructor(@Inject(LettersService) private readonly letters: LettersService) {}

  @Get(':id/pdf')
  @Header('Content-Type', 'application/pdf')
  @Header('Cache-Control', 'no-store')
  @ApiOperation({ summary: 'The letter rendered as PDF by the server (as it is mailed)' })
  async pdf(
    @CurrentUser() user: AuthUser,
    @Param('id', ParseUUIDPipe) id: string,
  ): Promise<StreamableFile> {
    return new StreamableFile(await this.letters.pdfFor(user, id));
  }
}
