import { Module } from '@nestjs/common';
import { RecordsModule } from '../records/records.module';
import { FhirExportService } from './fhir-export.service';
import { FhirHandoffService } from './fhir-handoff.service';
import { FhirHandoffWorker } from './fhir-handoff-worker.service';
import { FhirSourceService } from './fhir-source.service';
import { FHIR_TRANSPORT, fetchFhirTransport } from './fhir-transport';
import { FhirController } from './fhir.controller';

/** FHIR R4: the export of a visit, the bulk export, and the hand-off to the hospital record. */
@Module({
  imports: [RecordsModule],
  controllers: [FhirController],
  providers: [
    { provide: FHIR_TRANSPORT, useValue: fetchFhirTransport },
    FhirSourceService,
    FhirExportService,
    FhirHandoffService,
    FhirHandoffWorker,
  ],
  exports: [FhirExportService, FhirHandoffService],
})
export class FhirModule {}
