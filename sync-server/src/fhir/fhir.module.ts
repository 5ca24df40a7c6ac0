import { Module } from '@nestjs/common';
import { RecordsModule } from '../records/records.module';
import { FhirExportService } from './fhir-export.service';
import { FhirSourceService } from './fhir-source.service';
import { FhirController } from './fhir.controller';

/** FHIR R4: the export of a visit, the bulk export, and the hand-off to the hospital record. */
@Module({
  imports: [RecordsModule],
  controllers: [FhirController],
  providers: [FhirSourceService, FhirExportService],
  exports: [FhirExportService],
})
export class FhirModule {}
