// The FHIR routes (docs/fhir.md): one visit as a Bundle, and the bulk export as NDJSON.
import { Readable } from 'node:stream';
import { Controller, Get, Header, Inject, Param, Query, StreamableFile } from '@nestjs/common';
import { ApiOperation, ApiProduces, ApiQuery, ApiResponse, ApiTags } from '@nestjs/swagger';
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
  @ApiProduces('application/fhir+json')
  @ApiResponse({ status: 200, description: 'A FHIR R4 Bundle of type collection (docs/fhir.md)' })
  @ApiResponse({ status: 404, description: 'No such visit in your sites' })
  @ApiResponse({ status: 422, description: "The visit's patient is not on the server yet" })
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
  @ApiProduces('application/fhir+ndjson')
  @ApiQuery({ name: 'since', required: true, description: 'ISO 8601 time with a zone' })
  @ApiQuery({ name: 'site', required: false, description: 'One of your sites (default: all)' })
  @ApiResponse({ status: 200, description: 'One FHIR R4 resource per line (docs/fhir.md)' })
  bulk(@CurrentUser() user: AuthUser, @Query() query: BulkExportParams): StreamableFile {
    const sites = this.exports.bulkSites(user, query.site);
    return new StreamableFile(
      Readable.from(this.exports.bulkLines(user, sites, new Date(query.since))),
      { type: 'application/fhir+ndjson' },
    );
  }
}
