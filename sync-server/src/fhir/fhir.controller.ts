// The FHIR routes (docs/fhir.md): one visit as a Bundle, and the bulk export as NDJSON.
import { Readable } from 'node:stream';
import { Controller, Get, Header, Inject, Param, Query, StreamableFile } from '@nestjs/common';
import { ApiOperation, ApiTags } from '@nestjs/swagger';
import type { Bundle } from 'fhir/r4';
import { ApiSignedIn } from '../auth/api-docs';
import { CurrentUser, Roles } from '../auth/auth.decorators';
import type { AuthUser } from '../auth/auth-user';
import { ZodValidationPipe, zodDto } from '../common/zod-validation.pipe';
import { FhirExportService } from './fhir-export.service';
import { bulkExportQuerySchema, visitIdParamSchema } from './fhir.schemas';

class BulkExportParams extends zodDto(bulkExportQuerySchema) {}

@ApiTags('fhir')
@ApiSignedIn()
@Controller()
export class FhirController {
  constructor(@Inject(FhirExportService) private readonly exports: FhirExportService) {}

  @Get('visits/:id/fhir')
  @Roles('orthoptist', 'outreach', 'supervisor')
  @Header('Content-Type', 'application/fhir+json')
  @Header('Cache-Control', 'no-store')
  @ApiOperation({
    summary:
      'The visit as a FHIR R4 Bundle (collection): patient, practitioners, encounter, provenance, observations',
  })
  visit(
    @CurrentUser() user: AuthUser,
    @Param('id', new ZodValidationPipe(visitIdParamSchema)) id: string,
  ): Promise<Bundle> {
    return this.exports.visitBundle(user, id);
  }

  @Get('fhir/export')
  @Roles('supervisor')
  @Header('Cache-Control', 'no-store')
  @ApiOperation({
    summary:
      'Every FHIR resource of signed visits changed since a time in the supervisor’s sites, as NDJSON',
  })
  bulk(@CurrentUser() user: AuthUser, @Query() query: BulkExportParams): StreamableFile {
    const sites = this.exports.bulkSites(user, query.site);
    return new StreamableFile(
      Readable.from(this.exports.bulkLines(user, sites, new Date(query.since))),
      { type: 'application/fhir+ndjson' },
    );
  }
}
