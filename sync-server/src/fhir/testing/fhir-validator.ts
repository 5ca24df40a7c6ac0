// The independent check of what the export writes: the `fhir` package (FHIR.js, pinned), which
// validates a resource against the FHIR R4 (4.0.0) core StructureDefinitions and value sets it
// ships. Errors only: an unknown SNOMED CT code in an example-bound value set is a warning there.
import { Fhir } from 'fhir';

const validator = new Fhir();

/** The validator's errors for a resource (a Bundle's entries included), as `location: message`. */
export function fhirErrors(resource: object): string[] {
  const result = validator.validate(resource, { errorOnUnexpected: true });
  return result.messages
    .filter((m) => ['error', 'fatal'].includes(String(m.severity)))
    .map((m) => `${m.resourceId ?? ''} ${m.location ?? ''}: ${m.message ?? ''}`);
}
